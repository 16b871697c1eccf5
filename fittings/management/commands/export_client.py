from django.core.management.base import BaseCommand, CommandError

from fittings.management.commands.erase_client import actor
from fittings.services import client_records


class Command(BaseCommand):
    help = (
        "Write everything recorded about one client into a new zip for that client: client.json (details, "
        "sessions, measurements, plans, revisions, pins, history of changes) and the photos."
    )

    def add_arguments(self, parser):
        parser.add_argument("reference", help="The client's reference, e.g. WF-0102.")
        parser.add_argument("out", help="The zip file to write (must not exist).")

    def handle(self, *args, reference, out, **options):
        try:
            receipt = client_records.export_client(reference=reference, out=out, actor=actor("export_client"))
        except client_records.SafetyError as exc:
            raise CommandError(str(exc)) from None
        listed = ", ".join(f"{count} {name}" for name, count in receipt.counts.items())
        self.stdout.write(self.style.SUCCESS(f"Exported {reference} to {receipt.path}: {listed}."))
        self.stdout.write("The file holds the client's personal data: hand it over securely, then delete your copy.")
