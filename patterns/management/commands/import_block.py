from pathlib import Path

from django.core.management.base import BaseCommand, CommandError

from patterns.core.block import CB_LACED, CB_SEAMED
from patterns.core.importing import BlockImportError, ImportOptions, import_block
from patterns.models import GarmentKind
from patterns.services import BlockInvalid, save_block


class Command(BaseCommand):
    help = "Store a block drawn as DXF or SVG (see patterns/core/importing.py for what the drawing must hold)."

    def add_arguments(self, parser):
        parser.add_argument("file", help="a .dxf or .svg drawing")
        parser.add_argument("--name", required=True)
        parser.add_argument("--size", required=True, help="the size label, e.g. 10")
        parser.add_argument("--garment", choices=GarmentKind.values, default=GarmentKind.OVERBUST_CORSET.value)
        parser.add_argument("--front-panels", type=int, help="pieces in front of the side seam (default: half)")
        parser.add_argument("--centre-back", choices=(CB_LACED, CB_SEAMED), default=CB_LACED)
        parser.add_argument("--seam-allowance-mm", type=float, default=15.0)

    def handle(self, *args, **options):
        path = Path(options["file"])
        try:
            data = path.read_bytes()
        except OSError as exc:
            raise CommandError(f"Cannot read {path}: {exc}") from exc
        import_options = ImportOptions(
            name=options["name"],
            size=options["size"],
            garment=options["garment"],
            front_panels=options["front_panels"],
            centre_back=options["centre_back"],
            seam_allowance_mm=options["seam_allowance_mm"],
        )
        try:
            pattern = save_block(import_block(data, path.name, import_options))
        except (BlockImportError, BlockInvalid) as exc:
            raise CommandError(f"{path}: {exc}") from exc
        self.stdout.write(f"Stored {pattern} (id {pattern.pk}) with {pattern.panels.count()} panels.")
