"""The levels of a body block and the measurements a fitter takes: defined once.

Names follow ISO 8559-1 (anthropometric definitions for body measurement).
Plausibility ranges only produce advice; the hard limits refuse what cannot
be a human measurement at all.  The catalogue lives in measures.toml, with the sources of its figures.
"""

import tomllib
from dataclasses import dataclass
from pathlib import Path
from typing import Any


@dataclass(frozen=True)
class LevelDef:
    code: str
    label: str


# Top to bottom.  A base pattern uses some or all of them.
LEVELS: tuple[LevelDef, ...] = (
    LevelDef("bust", "Bust"),
    LevelDef("underbust", "Underbust"),
    LevelDef("waist", "Waist"),
    LevelDef("abdomen", "Abdomen (high hip)"),
    LevelDef("hip", "Hip"),
)
LEVEL_CODES = tuple(level.code for level in LEVELS)
LEVEL_LABELS = {level.code: level.label for level in LEVELS}


@dataclass(frozen=True)
class MeasureDef:
    code: str
    label: str  # ISO 8559-1 name where the standard has one
    kind: str  # one of MEASURE_KINDS
    hint: str
    level: str | None = None
    # Advice range in mm: outside it the form shows a plausibility message.
    plausible: tuple[int, int] = (0, 0)
    # Hard limits in mm: outside them the value is refused.
    limits: tuple[int, int] = (0, 0)
    # For lengths between two levels: (upper level, lower level).
    between: tuple[str, str] | None = None


MEASURE_KINDS = ("girth", "front_arc", "length", "span")

# The catalogue is data (with the sources of its figures beside them), kept in order of the form.
MEASURES_FILE = Path(__file__).resolve().with_name("measures.toml")


def _pair(row: dict[str, Any], key: str) -> tuple[Any, Any]:
    value = row[key]
    if not isinstance(value, list) or len(value) != 2:
        raise ValueError(f"{MEASURES_FILE.name}: {row['code']}.{key} must be a pair, not {value!r}")
    return (value[0], value[1])


def load_measures(path: Path = MEASURES_FILE) -> tuple[MeasureDef, ...]:
    """Read the measurement catalogue, refusing a level, kind or range the rest of the core would trip over."""
    with path.open("rb") as handle:
        rows = tomllib.load(handle)["measure"]
    measures = []
    for row in rows:
        measure = MeasureDef(
            code=row["code"],
            label=row["label"],
            kind=row["kind"],
            hint=row["hint"],
            level=row.get("level"),
            plausible=_pair(row, "plausible"),
            limits=_pair(row, "limits"),
            between=_pair(row, "between") if "between" in row else None,
        )
        levels = [measure.level] if measure.level else []
        levels += list(measure.between or ())
        if measure.kind not in MEASURE_KINDS or any(level not in LEVEL_CODES for level in levels):
            raise ValueError(f"{path.name}: {measure.code} names an unknown kind or level")
        (lo, hi), (floor, ceiling) = measure.plausible, measure.limits
        if not floor <= lo < hi <= ceiling:
            raise ValueError(f"{path.name}: {measure.code} needs limits round its plausible range")
        measures.append(measure)
    if len({m.code for m in measures}) != len(measures):
        raise ValueError(f"{path.name}: a measurement code stands twice")
    return tuple(measures)


MEASURES: tuple[MeasureDef, ...] = load_measures()
MEASURE_BY_CODE = {m.code: m for m in MEASURES}
GIRTH_BY_LEVEL = {m.level: m.code for m in MEASURES if m.kind == "girth" and m.level is not None}
FRONT_ARC_BY_LEVEL = {m.level: m.code for m in MEASURES if m.kind == "front_arc" and m.level is not None}
LENGTH_MEASURES = tuple(m for m in MEASURES if m.between)

# A change between two sessions of a client larger than this is worth a
# second look with the tape (common practice: re-measure on a surprise).
SURPRISING_CHANGE_MM = 30


def plausibility_notes(values: dict[str, float], previous: dict[str, float] | None = None) -> dict[str, list[str]]:
    """Advice per measurement code: outside the usual range, bust below underbust, a surprising change."""
    notes: dict[str, list[str]] = {}

    def add(code, text):
        notes.setdefault(code, []).append(text)

    for code, mm in values.items():
        if mm is None or code not in MEASURE_BY_CODE:
            continue
        lo, hi = MEASURE_BY_CODE[code].plausible
        if mm < lo or mm > hi:
            add(
                code,
                f"Unusual value: most clients measure between {lo / 10:g} and {hi / 10:g} cm here. Please check the tape.",
            )
        if previous and previous.get(code) is not None and abs(mm - previous[code]) > SURPRISING_CHANGE_MM:
            diff = (mm - previous[code]) / 10
            add(code, f"{diff:+.1f} cm since the last session. Worth measuring again.")
    bust, underbust = values.get("bust_girth"), values.get("underbust_girth")
    if bust is not None and underbust is not None and bust < underbust:
        add("bust_girth", "Bust is smaller than underbust. Check both readings.")
    for level, arc_code in FRONT_ARC_BY_LEVEL.items():
        arc, girth = values.get(arc_code), values.get(GIRTH_BY_LEVEL[level])
        if arc is not None and girth is not None and arc >= girth:
            add(arc_code, "A front arc must be shorter than the whole girth at that level.")
    return notes
