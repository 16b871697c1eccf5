from datetime import timedelta

from django.conf import settings
from django.core.management.base import BaseCommand, CommandError

from fittings.services.printing import clear_old_files


class Command(BaseCommand):
    help = (
        "Delete the PDF files of prints finished more than DAYS days ago (default ATELIER_KEEP_PRINTS_DAYS). "
        "The print jobs stay on record; printing the revision again draws the same pages."
    )

    def add_arguments(self, parser):
        parser.add_argument("--days", type=int, default=None, help="Keep files this many days (at least 1).")

    def handle(self, *args, days=None, **options):
        days = settings.ATELIER_KEEP_PRINTS_DAYS if days is None else days
        if days < 1:
            raise CommandError("--days must be at least 1.")
        cleared = clear_old_files(older_than=timedelta(days=days))
        self.stdout.write(f"Cleared the files of {cleared} print{'' if cleared == 1 else 's'} older than {days} days.")
