import json
import sys

from django.core.management.base import BaseCommand, CommandError

from patterns.core.allot import allot
from patterns.core.fitting import FittingFileError, body_from_measurements, load_fitting_text, result_to_json
from patterns.core.report import plan_table


class Command(BaseCommand):
    help = "Compute the seam allotments for a fitting file and print them as a table or as JSON."

    def add_arguments(self, parser):
        parser.add_argument("file", help="a fitting file (JSON); '-' reads standard input")
        parser.add_argument(
            "--json", action="store_true", help="print the result as JSON (see patterns/schemas/result.schema.json)"
        )

    def handle(self, *args, **options):
        path = options["file"]
        try:
            text = sys.stdin.read() if path == "-" else open(path, encoding="utf-8").read()
        except (OSError, UnicodeDecodeError) as exc:
            raise CommandError(f"Cannot read {path}: {exc}") from exc
        try:
            measurements, block, plan_options = load_fitting_text(text)
        except FittingFileError as exc:
            raise CommandError(f"{path}: {exc.field}: {exc.message}") from exc
        result = allot(block, body_from_measurements(measurements), plan_options)
        if options["json"]:
            self.stdout.write(json.dumps(result_to_json(result), indent=2))
        else:
            self.stdout.write(plan_table(result, block))
        if not result.ok:
            raise CommandError("The plan has errors; see 'Please read' above.")
