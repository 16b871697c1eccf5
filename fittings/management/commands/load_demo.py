from django.core.management.base import BaseCommand

from fittings.services.demo import load_demo_atelier


def report_demo(stdout, style, loaded):
    """Print what the demo load made, and the demo password once."""
    if loaded is None:
        stdout.write("The atelier already has clients or patterns; the demo was not loaded.")
        return
    stdout.write(
        style.SUCCESS(f"Demo atelier loaded: {len(loaded.patterns)} base patterns, {len(loaded.clients)} clients.")
    )
    login = loaded.login
    if login and login.password:
        stdout.write(style.WARNING(f"Demo login: user {login.username!r}, password {login.password!r}"))
        stdout.write("This password is shown only now. Anyone on your network with it can see the demo clients.")


class Command(BaseCommand):
    help = "Load the invented demo atelier (patterns, clients, a demo fitter login) into an empty database."

    def add_arguments(self, parser):
        parser.add_argument(
            "--password", help="Password for the demo login (default: ATELIER_DEMO_PASSWORD or random)."
        )

    def handle(self, *args, password=None, **options):
        report_demo(self.stdout, self.style, load_demo_atelier(password=password))
