from django.core.management.base import BaseCommand, CommandError

from fittings.services import backups


class Command(BaseCommand):
    help = (
        "Replace the whole database and the private files with a backup made by `backup`. "
        "Stop the app first. Everything recorded since the backup is lost, so this asks for --yes."
    )

    def add_arguments(self, parser):
        parser.add_argument("archive", help="A .tar.gz written by `manage.py backup`.")
        parser.add_argument("--yes", action="store_true", help="Really replace the current data.")

    def handle(self, *args, archive, yes, **options):
        try:
            manifest = backups.read_manifest(archive)
        except backups.SafetyError as exc:
            raise CommandError(str(exc)) from None
        if not yes:
            try:
                now = ", ".join(f"{count} {name}" for name, count in backups.database_summary().items())
            except Exception:  # noqa: BLE001 - an empty or new database has nothing to count
                now = "no readable data"
            raise CommandError(
                f"This replaces the current data ({now}) with the backup made {manifest['created_at']}. "
                "Stop the app, then run again with --yes."
            )
        try:
            receipt = backups.restore(archive)
        except backups.SafetyError as exc:
            raise CommandError(str(exc)) from None
        self.stdout.write(
            self.style.SUCCESS(
                f"Restored the backup made {receipt.created_at} into the {receipt.engine} database, "
                f"with {receipt.files} private file(s). Start the app again."
            )
        )
