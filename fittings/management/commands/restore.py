from django.core.management.base import CommandError

from fittings.management.records import RecordsCommand, listed
from fittings.services import backups


class Command(RecordsCommand):
    help = (
        "Replace the whole database and the private files with a backup made by `backup`. "
        "Stop the app first. Everything recorded since the backup is lost, so this asks for --yes."
    )
    confirm = "Really replace the current data."

    def add_arguments(self, parser):
        parser.add_argument("archive", help="A .tar.gz written by `manage.py backup`.")
        super().add_arguments(parser)

    def handle(self, *args, archive, yes, **options):
        manifest = backups.read_manifest(archive)
        if not yes:
            try:
                now = listed(backups.database_summary())
            except Exception:  # noqa: BLE001 - an empty or new database has nothing to count
                now = "no readable data"
            raise CommandError(
                f"This replaces the current data ({now}) with the backup made {manifest['created_at']}. "
                "Stop the app, then run again with --yes."
            )
        receipt = backups.restore(archive)
        self.stdout.write(
            self.style.SUCCESS(
                f"Restored the backup made {receipt.created_at} into the {receipt.engine} database, "
                f"with {receipt.files} private file(s). Start the app again."
            )
        )
