"""The fitting file: measurements + base pattern + plan options, as JSON.

One format serves the command line, export and import in the app, and the
inputs snapshot of every plan revision.  All lengths in the file are in
millimetres; ``unit`` only says how the fitter reads them.  The JSON Schemas
for this file and for the result live in ``patterns/schemas/``.
"""

import json
import math
from dataclasses import asdict
from functools import cache
from pathlib import Path

import jsonschema

from patterns.core.allot import Allotment, Body, Override, PinAdjustment, PlanOptions, allot
from patterns.core.block import Block, ChannelMark, Level, Panel, PanelCurves, Point, Seam, block_errors
from patterns.core.measures import FRONT_ARC_BY_LEVEL, GIRTH_BY_LEVEL, LENGTH_MEASURES, MEASURE_BY_CODE
from patterns.core.units import DEFAULT_STEP_MM

SCHEMA_DIR = Path(__file__).resolve().parent.parent / "schemas"
FORMAT = "atelier-fitting"
VERSION = 1
CURVE_SIDES = ("left", "right", "top", "bottom")


# Error messages quote what the file holds; a file of megabytes must not come back as one.
MESSAGE_LIMIT = 200
# No length in millimetres needs more digits than this; Python refuses to read more than 4,300.
MAX_NUMBER_DIGITS = 15


def shorten(text: str, limit: int = MESSAGE_LIMIT) -> str:
    """``text`` cut to about ``limit`` characters, saying how much was left out."""
    text = str(text)
    if len(text) <= limit:
        return text
    return f"{text[:limit]}… ({len(text) - limit:,} more characters)"


class FittingFileError(ValueError):
    """A fitting file that cannot be used, with the field at fault (both kept to a readable length)."""

    def __init__(self, field: str, message: str):
        self.field = shorten(field, 80)
        self.message = shorten(message)
        super().__init__(f"{self.field}: {self.message}" if self.field else self.message)


@cache
def schema(name: str) -> dict:
    return json.loads((SCHEMA_DIR / f"{name}.schema.json").read_text())


def block_to_dict(block: Block) -> dict:
    data = asdict(block)
    data["levels"] = [{"name": lv.name, "y": lv.y} for lv in block.levels]
    for panel, out in zip(block.panels, data["panels"]):
        # A panel without a drawn stitch line is written exactly as before drawn panels existed.
        out.pop("curves")
        if panel.curves is not None:
            out["curves"] = curves_to_dict(panel.curves)
    for seam in data["seams"]:
        seam["alterable_at"] = [lv for lv in block.level_names if lv in seam["alterable_at"]]
    # Marked boning channels are optional: a block without any writes the same file as before.
    data.pop("channels", None)
    if block.channels:
        data["channels"] = channels_to_list(block.channels)
    return data


def channels_to_list(channels) -> list[dict]:
    """Marked boning channels as JSON, leaving out what is not set."""
    return [{k: v for k, v in asdict(c).items() if v is not None and v != ""} for c in channels]


def channels_from_list(data: list[dict]) -> tuple[ChannelMark, ...]:
    return tuple(
        ChannelMark(
            panel=c["panel"],
            fraction=float(c["fraction"]) if c.get("fraction") is not None else None,
            edge=c.get("edge", "left"),
            offset_mm=float(c.get("offset_mm", 0.0)),
            name=c.get("name", ""),
        )
        for c in data
    )


def block_from_dict(data: dict) -> Block:
    def point(p):
        return Point(float(p["x"]), float(p["y"]))

    return Block(
        name=data["name"],
        size=str(data["size"]),
        garment=data.get("garment", ""),
        levels=tuple(Level(lv["name"], float(lv["y"])) for lv in data["levels"]),
        panels=tuple(
            Panel(
                name=p["name"],
                side=p["side"],
                left={k: float(v) for k, v in p["left"].items()},
                right={k: float(v) for k, v in p["right"].items()},
                top_left=point(p["top_left"]),
                top_right=point(p["top_right"]),
                bottom_left=point(p["bottom_left"]),
                bottom_right=point(p["bottom_right"]),
                cut_count=int(p.get("cut_count", 2)),
                on_fold=bool(p.get("on_fold", False)),
                curves=curves_from_dict(p["curves"]) if p.get("curves") else None,
                top_bound=bool(p.get("top_bound", False)),
                bottom_bound=bool(p.get("bottom_bound", False)),
                grainline_x=None if p.get("grainline_x") is None else float(p["grainline_x"]),
            )
            for p in data["panels"]
        ),
        seams=tuple(
            Seam(
                name=s["name"],
                kind=s["kind"],
                front_panel=s["front_panel"],
                back_panel=s["back_panel"],
                alterable_at=frozenset(s["alterable_at"]),
                cap_mm=float(s.get("cap_mm", 15.0)),
            )
            for s in data["seams"]
        ),
        centre_front=data.get("centre_front", "busk"),
        centre_back=data.get("centre_back", "laced"),
        seam_allowance_mm=float(data.get("seam_allowance_mm", 15.0)),
        size_order=int(data.get("size_order", 0)),
        channels=channels_from_list(data.get("channels", [])),
    )


def curves_to_dict(curves: PanelCurves) -> dict:
    """A drawn stitch line as JSON: each side a list of [x, y] in mm."""
    data = {side: [[float(x), float(y)] for x, y in getattr(curves, side)] for side in CURVE_SIDES}
    if curves.grainline is not None:
        data["grainline"] = [[float(x), float(y)] for x, y in curves.grainline]
    return data


def curves_from_dict(data: dict) -> PanelCurves:
    def line(points):
        return tuple((float(x), float(y)) for x, y in points)

    grain = data.get("grainline")
    return PanelCurves(**{side: line(data[side]) for side in CURVE_SIDES}, grainline=line(grain) if grain else None)


def body_from_measurements(values: dict[str, float]) -> Body:
    return Body(
        girths={lv: float(values[code]) for lv, code in GIRTH_BY_LEVEL.items() if values.get(code) is not None},
        front_arcs={lv: float(values[code]) for lv, code in FRONT_ARC_BY_LEVEL.items() if values.get(code) is not None},
        lengths={m.code: float(values[m.code]) for m in LENGTH_MEASURES if values.get(m.code) is not None},
        bust_span=float(values["bust_span"]) if values.get("bust_span") is not None else None,
    )


def allot_measurements(block: Block, measurements: dict[str, float], options: PlanOptions) -> Allotment:
    """The engine on a fitting's readings (mm by measurement code), as every screen and print asks it."""
    return allot(block, body_from_measurements(measurements), options)


def options_to_dict(options: PlanOptions) -> dict:
    return asdict(options)


def options_from_dict(data: dict, unit: str = "cm") -> PlanOptions:
    return PlanOptions(
        ease={k: float(v) for k, v in data.get("ease", {}).items()},
        lacing_gap_mm=float(data.get("lacing_gap_mm", 50.0)),
        centre_front_width_mm=(
            None if data.get("centre_front_width_mm") is None else float(data["centre_front_width_mm"])
        ),
        step_mm=float(data.get("step_mm") or DEFAULT_STEP_MM[unit]),
        unit=unit,
        policy=data.get("policy", "even"),
        overrides=tuple(
            Override(o["seam"], o["level"], o["panel"], float(o["shift_mm"])) for o in data.get("overrides", [])
        ),
        pins=tuple(PinAdjustment(p["seam"], p["level"], float(p["amount_mm"])) for p in data.get("pins", [])),
        apply_lengths=bool(data.get("apply_lengths", True)),
    )


def fitting_to_dict(
    measurements: dict[str, float], block: Block, options: PlanOptions, meta: dict | None = None
) -> dict:
    plan = options_to_dict(options)
    unit = plan.pop("unit")
    return {
        "format": FORMAT,
        "version": VERSION,
        "unit": unit,
        **({"about": meta} if meta else {}),
        "measurements": {code: float(v) for code, v in measurements.items() if v is not None},
        "pattern": block_to_dict(block),
        "plan": plan,
    }


def _path(error: jsonschema.ValidationError) -> str:
    return "/".join(str(p) for p in error.absolute_path) or "(file)"


def read_fitting(data) -> tuple[dict[str, float], Block, PlanOptions]:
    """Check a parsed fitting file and turn it into the engine's inputs.

    Raises FittingFileError naming the field at fault.
    """
    if not isinstance(data, dict):
        raise FittingFileError("(file)", "A fitting file must be a JSON object.")
    validator = jsonschema.Draft202012Validator(schema("fitting"))
    errors = sorted(validator.iter_errors(data), key=lambda e: (len(list(e.absolute_path)), str(e.absolute_path)))
    if errors:
        error = errors[0]
        raise FittingFileError(_path(error), error.message)
    measurements = data["measurements"]
    for code, value in measurements.items():
        lo, hi = MEASURE_BY_CODE[code].limits
        if not (lo <= value <= hi):
            raise FittingFileError(
                f"measurements/{code}", f"{value} mm is outside what a body measures ({lo}-{hi} mm)."
            )
    block = block_from_dict(data["pattern"])
    problems = block_errors(block)
    if problems:
        raise FittingFileError("pattern", problems[0])
    unit = data.get("unit", "cm")
    options = options_from_dict(data.get("plan", {}), unit)
    seams = {s.name: s for s in block.seams}
    first_fixed: dict[tuple[str, str, str], int] = {}
    for i, o in enumerate(options.overrides):
        where = f"plan/overrides/{i}"
        cell = (o.seam, o.level, o.panel)
        if cell in first_fixed:
            raise FittingFileError(
                where,
                f"The {o.panel} edge of the {o.seam} at {o.level} is already fixed by "
                f"plan/overrides/{first_fixed[cell]}; a cell is fixed once.",
            )
        first_fixed[cell] = i
        if o.seam not in seams:
            raise FittingFileError(f"{where}/seam", f"There is no seam called {o.seam!r} in the pattern.")
        if o.level not in block.level_names:
            raise FittingFileError(f"{where}/level", f"The pattern has no level {o.level!r}.")
        if o.panel not in (seams[o.seam].front_panel, seams[o.seam].back_panel):
            raise FittingFileError(f"{where}/panel", f"The {o.seam} has no raw edge on {o.panel!r}.")
    for i, p in enumerate(options.pins):
        where = f"plan/pins/{i}"
        if p.seam not in seams:
            raise FittingFileError(f"{where}/seam", f"There is no seam called {p.seam!r} in the pattern.")
        if p.level not in block.level_names:
            raise FittingFileError(f"{where}/level", f"The pattern has no level {p.level!r}.")
    for level in options.ease:
        if level not in block.level_names:
            raise FittingFileError(f"plan/ease/{level}", f"The pattern has no level {level!r}.")
    return {k: float(v) for k, v in measurements.items()}, block, options


def load_fitting_text(text: str) -> tuple[dict[str, float], Block, PlanOptions]:
    try:
        data = json.loads(
            text, parse_constant=_refuse_constant, parse_int=_integer, parse_float=_finite, object_pairs_hook=_object
        )
    except FittingFileError:
        raise
    except (json.JSONDecodeError, RecursionError) as exc:
        raise FittingFileError("(file)", f"Not valid JSON: {exc}") from exc
    return read_fitting(data)


def _refuse_constant(name):
    raise FittingFileError("(file)", f"{name} is not a length; use a finite number.")


def _integer(text: str) -> int:
    digits = len(text.lstrip("-"))
    if digits > MAX_NUMBER_DIGITS:
        raise FittingFileError("(file)", f"A number of {digits:,} digits is not a length in millimetres.")
    return int(text)


def _finite(text: str) -> float:
    value = float(text)
    if not math.isfinite(value):
        raise FittingFileError(
            "(file)", f"The number {shorten(text, 40)} is far too large to be a length in millimetres."
        )
    return value


def _object(pairs: list) -> dict:
    data = {}
    for key, value in pairs:
        if key in data:
            raise FittingFileError("(file)", f"The name {key!r} appears twice in one object; keep one.")
        data[key] = value
    return data


def result_to_json(result: Allotment) -> dict:
    data = result.as_dict()
    return json.loads(json.dumps(data, allow_nan=False, default=_jsonable))


def _jsonable(value):
    if isinstance(value, (set, frozenset)):
        return sorted(value)
    if isinstance(value, float) and not math.isfinite(value):
        return None
    raise TypeError(type(value).__name__)


def validate_result(data: dict) -> None:
    jsonschema.Draft202012Validator(schema("result")).validate(data)


def allotment_from_dict(data: dict) -> Allotment:
    """The stored result back as the engine's dataclass, exactly as it was computed."""
    from patterns.core.allot import BandChange, EdgeShift, LevelResult, PartResult
    from patterns.core.findings import Finding

    def part(value):
        return PartResult(**value) if value else None

    inputs = data.get("inputs", {})
    return Allotment(
        block=data["block"],
        size=data["size"],
        unit=data["unit"],
        step_mm=data["step_mm"],
        policy=data["policy"],
        levels=tuple(
            LevelResult(**{**lv, "front": part(lv.get("front")), "back": part(lv.get("back"))}) for lv in data["levels"]
        ),
        shifts=tuple(EdgeShift(**s) for s in data["shifts"]),
        centre_front_shift_mm=data["centre_front_shift_mm"],
        bands=tuple(BandChange(**b) for b in data["bands"]),
        findings=tuple(Finding(**f) for f in data["findings"]),
        inputs=inputs,
    )
