from fittings.management.records import RecordsCommand
from fittings.services import backups


class Command(RecordsCommand):
    help = (
        "Copy the database and the private files (photos, printed documents) into one new archive (.tar.gz). "
        "Safe while the app is running. The archive holds clients' personal data: keep it as safe as the data folder."
    )

    def add_arguments(self, parser):
        parser.add_argument(
            "out", help="The archive to write, e.g. /media/usb/atelier-2026-12-02.tar.gz (must not exist)."
        )
        parser.add_argument(
            "--portable",
            action="store_true",
            help="Write the database as JSON even from SQLite, to restore it into PostgreSQL.",
        )

    def handle(self, *args, out, portable, **options):
        receipt = backups.backup(out, portable=portable)
        self.stdout.write(
            self.style.SUCCESS(
                f"Backed up the {receipt.engine} database and {receipt.files} private file(s) to {receipt.path} "
                f"({receipt.bytes / 1024 / 1024:.1f} MB)."
            )
        )
