import getpass

from django.core.management.base import BaseCommand, CommandError

from fittings.services import client_records


def actor(command):
    try:
        return f"manage.py {command} (run as {getpass.getuser()})"
    except (KeyError, OSError):
        return f"manage.py {command}"


class Command(BaseCommand):
    help = (
        "Erase a client and everything recorded about them for good (sessions, measurements, photos, plans, "
        "revisions, pins, printed documents), when the client asks. Without --yes, only says what would go. "
        "Backups made before keep the client until they are deleted."
    )

    def add_arguments(self, parser):
        parser.add_argument("reference", help="The client's reference, e.g. WF-0102.")
        parser.add_argument("--yes", action="store_true", help="Really erase; this cannot be undone.")

    def handle(self, *args, reference, yes, **options):
        try:
            records = client_records.client_records(reference)
        except client_records.SafetyError as exc:
            raise CommandError(str(exc)) from None
        listed = ", ".join(f"{count} {name}" for name, count in records.counts().items())
        if not yes:
            raise CommandError(
                f"This would erase {records.client.reference} for good: {listed}. Nothing was erased; "
                "run again with --yes to erase (export_client first if the client wants a copy)."
            )
        erasure = client_records.erase_client(reference=reference, actor=actor("erase_client"))
        self.stdout.write(
            self.style.SUCCESS(
                f"Erased {reference}: {listed}; {erasure.files_removed} file(s) deleted from the data folder."
            )
        )
        if erasure.files_missing:
            self.stdout.write(self.style.WARNING(f"{len(erasure.files_missing)} file(s) were already missing."))
        self.stdout.write("Backups made before today still hold this client; delete them as they age out.")
