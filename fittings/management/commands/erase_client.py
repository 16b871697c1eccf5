from django.core.management.base import CommandError

from fittings.management.records import RecordsCommand, actor, listed
from fittings.services import client_records


class Command(RecordsCommand):
    help = (
        "Erase a client and everything recorded about them for good (sessions, measurements, photos, plans, "
        "revisions, pins, printed documents), when the client asks. Without --yes, only says what would go. "
        "Backups made before keep the client until they are deleted."
    )
    confirm = "Really erase; this cannot be undone."

    def add_arguments(self, parser):
        parser.add_argument("reference", help="The client's reference, e.g. WF-0102.")
        super().add_arguments(parser)

    def handle(self, *args, reference, yes, **options):
        records = client_records.client_records(reference)
        counts = listed(records.counts())
        if not yes:
            raise CommandError(
                f"This would erase {records.client.reference} for good: {counts}. Nothing was erased; "
                "run again with --yes to erase (export_client first if the client wants a copy)."
            )
        erasure = client_records.erase_client(reference=reference, actor=actor("erase_client"))
        self.stdout.write(
            self.style.SUCCESS(
                f"Erased {reference}: {counts}; {erasure.files_removed} file(s) deleted from the data folder."
            )
        )
        if erasure.files_missing:
            self.stdout.write(self.style.WARNING(f"{len(erasure.files_missing)} file(s) were already missing."))
        self.stdout.write("Backups made before today still hold this client; delete them as they age out.")
