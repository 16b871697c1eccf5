import sys
from pathlib import Path

from django.core.management.base import BaseCommand, CommandError

from fittings import piece_files
from fittings.models import PlanRevision
from patterns.models import BasePattern


class Command(BaseCommand):
    help = (
        "Write pattern pieces as a drawing file: a plan revision's altered panels, or a base pattern's own, "
        "as SVG (1:1, mm) or DXF (mm, one block per piece, named layers)."
    )

    def add_arguments(self, parser):
        which = parser.add_mutually_exclusive_group(required=True)
        which.add_argument("--revision", metavar="PLAN:NUMBER", help="a plan's revision, e.g. 12:2")
        which.add_argument("--pattern", type=int, metavar="ID", help="a base pattern's id")
        parser.add_argument("--format", choices=sorted(piece_files.FORMATS), default="dxf")
        parser.add_argument(
            "-o",
            "--output",
            help="file to write (default: the usual name in the current folder; '-' writes to standard output)",
        )

    def handle(self, *args, **options):
        fmt = options["format"]
        if options["revision"]:
            try:
                plan_id, number = (int(part) for part in options["revision"].split(":"))
            except ValueError as exc:
                raise CommandError("Give the revision as PLAN:NUMBER, e.g. 12:2.") from exc
            revision = (
                PlanRevision.objects.select_related("plan__client")
                .filter(plan_id=plan_id, number=number, plan__client__is_deleted=False)
                .first()
            )
            if revision is None:
                raise CommandError(f"There is no revision {number} of plan {plan_id}.")
            found = piece_files.revision_pieces(revision, fmt)
        else:
            pattern = BasePattern.objects.filter(pk=options["pattern"]).first()
            if pattern is None:
                raise CommandError(f"There is no base pattern {options['pattern']}.")
            found = piece_files.pattern_pieces(pattern, fmt)
        target = options["output"] or found.filename
        if target == "-":
            sys.stdout.buffer.write(found.content)
            return
        Path(target).write_bytes(found.content)
        self.stdout.write(f"Wrote {target} ({len(found.content)} bytes).")
