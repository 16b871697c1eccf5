from django.core.management import call_command
from django.core.management.base import BaseCommand

from atelier.warmup import warm_up


class Command(BaseCommand):
    help = (
        "The background worker `manage.py start` runs beside the server: loads the drawing and printing "
        "libraries first, so the first print of the day is as quick as the next, then runs db_worker."
    )

    def add_arguments(self, parser):
        parser.add_argument(
            "--interval",
            type=float,
            default=0.25,
            help="Seconds between looks at an empty queue (default 0.25: a print starts at once).",
        )

    def handle(self, *args, interval, **options):
        warm_up()
        call_command("db_worker", interval=interval, startup_delay=False)
