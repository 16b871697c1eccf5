from fittings.management.records import RecordsCommand, actor, listed
from fittings.services import client_records


class Command(RecordsCommand):
    help = (
        "Write everything recorded about one client into a new zip for that client: client.json (details, "
        "sessions, measurements, plans, revisions, pins, history of changes) and the photos."
    )

    def add_arguments(self, parser):
        parser.add_argument("reference", help="The client's reference, e.g. WF-0102.")
        parser.add_argument("out", help="The zip file to write (must not exist).")

    def handle(self, *args, reference, out, **options):
        receipt = client_records.export_client(reference=reference, out=out, actor=actor("export_client"))
        self.stdout.write(self.style.SUCCESS(f"Exported {reference} to {receipt.path}: {listed(receipt.counts)}."))
        self.stdout.write("The file holds the client's personal data: hand it over securely, then delete your copy.")
