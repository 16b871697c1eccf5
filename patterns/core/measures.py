"""The levels of a body block and the measurements a fitter takes: defined once.

Names follow ISO 8559-1 (anthropometric definitions for body measurement).
Plausibility ranges only produce advice; the hard limits refuse what cannot
be a human measurement at all.  Sources are named beside each figure.
"""

from dataclasses import dataclass


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
    kind: str  # "girth", "front_arc", "length", "span"
    hint: str
    level: str | None = None
    # Advice range in mm: outside it the form shows a plausibility message.
    plausible: tuple[int, int] = (0, 0)
    # Hard limits in mm: outside them the value is refused.
    limits: tuple[int, int] = (0, 0)
    # For lengths between two levels: (upper level, lower level).
    between: tuple[str, str] | None = None


# Advice ranges for girths: ANSUR II female (2012, public release) minimum
# and maximum widened by 10 %, and NHANES 2017-2020 p95 for waist and hip,
# so that real clients are never refused.  Underbust has no survey figure
# here: its range is from memory (a band size 26-48 in).  Hard limits are
# generous round numbers of our own.
MEASURES: tuple[MeasureDef, ...] = (
    MeasureDef(
        "bust_girth",
        "Bust girth",
        "girth",
        "Level round the fullest part of the bust, under the arms, breathing normally.",
        level="bust",
        plausible=(620, 1500),
        limits=(300, 2500),
    ),
    MeasureDef(
        "underbust_girth",
        "Underbust girth",
        "girth",
        "Level round the ribcage just below the breasts, snug but not tight.",
        level="underbust",
        plausible=(600, 1300),
        limits=(300, 2500),
    ),
    MeasureDef(
        "waist_girth",
        "Waist girth",
        "girth",
        "Round the natural waist, midway between the lowest rib and the top of the hip bone.",
        level="waist",
        plausible=(500, 1450),
        limits=(300, 2500),
    ),
    MeasureDef(
        "abdomen_girth",
        "Abdomen girth (high hip)",
        "girth",
        "Level round the fullest part of the abdomen, about 10 cm below the waist.",
        level="abdomen",
        plausible=(600, 1500),
        limits=(300, 2500),
    ),
    MeasureDef(
        "hip_girth",
        "Hip girth",
        "girth",
        "Level round the fullest part of the seat, feet together.",
        level="hip",
        plausible=(710, 1600),
        limits=(300, 2500),
    ),
    MeasureDef(
        "bust_front_arc",
        "Bust front arc",
        "front_arc",
        "Across the front at bust level, from side seam line to side seam line.",
        level="bust",
        plausible=(300, 800),
        limits=(100, 1300),
    ),
    MeasureDef(
        "underbust_front_arc",
        "Underbust front arc",
        "front_arc",
        "Across the front at underbust level, side to side.",
        level="underbust",
        plausible=(280, 700),
        limits=(100, 1300),
    ),
    MeasureDef(
        "waist_front_arc",
        "Waist front arc",
        "front_arc",
        "Across the front at the waist, side to side.",
        level="waist",
        plausible=(230, 750),
        limits=(100, 1300),
    ),
    MeasureDef(
        "abdomen_front_arc",
        "Abdomen front arc",
        "front_arc",
        "Across the front at abdomen level, side to side.",
        level="abdomen",
        plausible=(280, 800),
        limits=(100, 1300),
    ),
    MeasureDef(
        "hip_front_arc",
        "Hip front arc",
        "front_arc",
        "Across the front at hip level, side to side.",
        level="hip",
        plausible=(320, 800),
        limits=(100, 1300),
    ),
    MeasureDef(
        "bust_to_underbust",
        "Bust to underbust length",
        "length",
        "Straight down the front from the bust point to the underbust line.",
        plausible=(40, 180),
        limits=(10, 400),
        between=("bust", "underbust"),
    ),
    MeasureDef(
        "underbust_to_waist",
        "Underbust to waist length",
        "length",
        "Down the side of the front, from the underbust line to the waist.",
        plausible=(50, 200),
        limits=(10, 400),
        between=("underbust", "waist"),
    ),
    MeasureDef(
        "waist_to_abdomen",
        "Waist to abdomen length",
        "length",
        "Down the side from the waist to the abdomen level.",
        plausible=(50, 160),
        limits=(10, 400),
        between=("waist", "abdomen"),
    ),
    MeasureDef(
        "waist_to_hip",
        "Waist to hip length",
        "length",
        "Down the side from the waist to the hip level.",
        plausible=(140, 280),
        limits=(30, 500),
        between=("waist", "hip"),
    ),
    MeasureDef(
        "centre_front_length",
        "Centre front length",
        "length",
        "From the top of the breastbone straight down the centre front to the waist.",
        plausible=(250, 450),
        limits=(100, 800),
    ),
    MeasureDef(
        "centre_back_length",
        "Centre back waist length",
        "length",
        "From the nape of the neck down the spine to the waist.",
        plausible=(330, 480),
        limits=(100, 800),
    ),
    MeasureDef(
        "bust_span",
        "Bust point to bust point",
        "span",
        "Straight across from one bust point to the other.",
        plausible=(140, 260),
        limits=(50, 500),
    ),
)
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
