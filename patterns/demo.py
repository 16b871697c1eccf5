"""The demo atelier's base patterns and clients, as plain data (no Django).

Everything here is invented for the demo: the atelier, its clients and its
blocks.  The corset run is drafted from body girths of ASTM D5585-11
(adult female misses), Table 1, inch-pound values for bust, underbust and
waist (curvy); hip and abdomen girths and all vertical lengths are from
memory of typical misses' proportions, not from a table.  Each corset size
is drafted to the body girth less a 5 cm lacing gap, with no ease: the plan
adds the reduction or ease per level.
"""

from fractions import Fraction
from pathlib import Path

from patterns.core.block import BACK, CB_LACED, CB_SEAMED, CF_BUSK, CF_FOLD, FRONT, Block, Level, Panel, Point, Seam
from patterns.core.units import MM_PER_INCH

ATELIER_NAME = "Wrenfield Stays & Bodices"

LACING_GAP_MM = 50.0


def _in(text: str) -> float:
    """'35 1/4' inches to mm."""
    parts = text.split()
    value = Fraction(parts[0]) + (Fraction(parts[1]) if len(parts) > 1 else 0)
    return float(value * Fraction(MM_PER_INCH))


# ASTM D5585-11, Table 1 (inches): bust, underbust, waist (curvy).
# Hip and abdomen: from memory of the same size range.
CORSET_SIZES = {
    "6": {
        "bust": _in("35 1/4"),
        "underbust": _in("29"),
        "waist": _in("27"),
        "abdomen": _in("33 1/2"),
        "hip": _in("37 1/2"),
    },
    "8": {
        "bust": _in("36 1/4"),
        "underbust": _in("30"),
        "waist": _in("28"),
        "abdomen": _in("34 1/2"),
        "hip": _in("38 1/2"),
    },
    "10": {
        "bust": _in("37 1/4"),
        "underbust": _in("31"),
        "waist": _in("29"),
        "abdomen": _in("35 1/2"),
        "hip": _in("39 1/2"),
    },
    "12": {
        "bust": _in("38 3/4"),
        "underbust": _in("32 1/2"),
        "waist": _in("30 3/4"),
        "abdomen": _in("37"),
        "hip": _in("41"),
    },
    "14": {
        "bust": _in("40 3/8"),
        "underbust": _in("34"),
        "waist": _in("32 1/2"),
        "abdomen": _in("38 1/2"),
        "hip": _in("42 1/2"),
    },
}

# Share of the half girth each corset panel takes, centre front to centre back.
_CORSET_SHARES = {
    "bust": (0.17, 0.19, 0.16, 0.16, 0.16, 0.16),
    "underbust": (0.17, 0.17, 0.16, 0.16, 0.17, 0.17),
    "waist": (0.17, 0.16, 0.17, 0.17, 0.16, 0.17),
    "abdomen": (0.16, 0.17, 0.17, 0.17, 0.17, 0.16),
    "hip": (0.15, 0.17, 0.18, 0.18, 0.16, 0.16),
}
_CORSET_PANELS = (
    ("Centre front", FRONT),
    ("Front", FRONT),
    ("Side front", FRONT),
    ("Side back", BACK),
    ("Back", BACK),
    ("Centre back", BACK),
)
_ALL = frozenset(("bust", "underbust", "waist", "abdomen", "hip"))
_WAIST_DOWN = frozenset(("waist", "abdomen", "hip"))
_CORSET_SEAMS = (
    ("Front princess seam", "princess", _WAIST_DOWN),
    ("Side front seam", "other", _ALL),
    ("Side seam", "side", _ALL),
    ("Back princess seam", "princess", _ALL),
    ("Back seam", "other", _ALL),
)
# Vertical positions (mm from the top of the block) for size 10; memory of
# typical misses' lengths (bust to underbust 9 cm, underbust to waist 10 cm,
# waist to abdomen 9 cm, waist to hip 19 cm).  Each size step adds 3 mm to
# each band.
_CORSET_Y10 = {"bust": 60.0, "underbust": 150.0, "waist": 250.0, "abdomen": 340.0, "hip": 440.0}


def _panels(
    level_widths: dict[str, list[float]],
    levels: tuple[Level, ...],
    *,
    cf_fold: bool,
    top: list[float],
    bottom: list[float],
    names,
    gap: float = 50.0,
    bound: bool = False,
) -> tuple[Panel, ...]:
    """Lay the panels out side by side: straight centre front, straight centre back,
    the others symmetric about their grainline."""
    count = len(names)
    widest = [max(level_widths[lv.name][i] for lv in levels) for i in range(count)]
    panels = []
    origin = 0.0
    for i, (name, side) in enumerate(names):
        left, right = {}, {}
        for lv in levels:
            w = level_widths[lv.name][i]
            if i == 0:
                left[lv.name], right[lv.name] = origin, origin + w
            elif i == count - 1:
                left[lv.name], right[lv.name] = origin + widest[i] - w, origin + widest[i]
            else:
                centre = origin + widest[i] / 2
                left[lv.name], right[lv.name] = centre - w / 2, centre + w / 2
        first, last = levels[0].name, levels[-1].name
        panels.append(
            Panel(
                name=name,
                side=side,
                left=left,
                right=right,
                top_left=Point(left[first], top[i]),
                top_right=Point(right[first], top[i + 1] if i + 1 < count else top[i]),
                bottom_left=Point(left[last], bottom[i]),
                bottom_right=Point(right[last], bottom[i + 1] if i + 1 < count else bottom[i]),
                cut_count=1 if (i == 0 and cf_fold) else 2,
                on_fold=(i == 0 and cf_fold),
                top_bound=bound,
                bottom_bound=bound,
            )
        )
        origin += widest[i] + gap
    return tuple(panels)


def _demo_block(
    name: str,
    size: str,
    garment: str,
    levels: tuple[Level, ...],
    panels: tuple[Panel, ...],
    seam_specs,
    *,
    centre_front: str = CF_BUSK,
    centre_back: str = CB_LACED,
    size_order: int = 0,
) -> Block:
    """A demo block with a seam (name, kind, levels it may move at) between each pair of neighbouring
    panels; the demo sews with a 1.5 cm seam allowance and lets each raw edge move 1.5 cm at most."""
    seams = tuple(
        Seam(name=seam, kind=kind, front_panel=a.name, back_panel=b.name, alterable_at=at, cap_mm=15.0)
        for (seam, kind, at), a, b in zip(seam_specs, panels, panels[1:])
    )
    # Every name here is the Block field it fills, in the field order.
    return Block(name, size, garment, levels, panels, seams, centre_front, centre_back, 15.0, size_order)


def corset_block(size: str) -> Block:
    body = CORSET_SIZES[size]
    order = list(CORSET_SIZES).index(size)
    step = order - 2
    names = list(_CORSET_Y10)
    ys, y = {}, 0.0
    for i, name in enumerate(names):
        if i == 0:
            y = _CORSET_Y10[name] + 2 * step
        else:
            y += _CORSET_Y10[name] - _CORSET_Y10[names[i - 1]] + 3 * step
        ys[name] = round(y, 1)
    levels = tuple(Level(name, ys[name]) for name in names)
    widths = {
        lv: [round((body[lv] - LACING_GAP_MM) / 2 * share, 1) for share in shares]
        for lv, shares in _CORSET_SHARES.items()
    }
    hip_y = ys["hip"]
    # Top edge: highest at centre front over the bust, dipping under the arm.
    top = [0.0, 5.0, 30.0, 45.0, 35.0, 20.0, 20.0]
    # Bottom edge: every panel reaches below the hip line, a little higher over the hip bone.
    bottom = [hip_y + 20, hip_y + 15, hip_y + 10, hip_y + 10, hip_y + 15, hip_y + 20, hip_y + 20]
    # Bound at top and bottom, as corsets usually are (common practice): no seam allowance there.
    panels = _panels(widths, levels, cf_fold=False, top=top, bottom=bottom, names=_CORSET_PANELS, bound=True)
    return _demo_block(
        "Overbust corset, six panels", size, "overbust corset", levels, panels, _CORSET_SEAMS, size_order=order
    )


def corset_run() -> list[Block]:
    return [corset_block(size) for size in CORSET_SIZES]


def bodice_block() -> Block:
    """A fitted evening bodice, size 12 (ASTM D5585-11 bust, underbust, waist (curvy);
    abdomen from memory), drafted with ease already in: 4 cm at bust, 2 cm at
    underbust and waist, 3 cm at abdomen.  Centre front on the fold, centre back
    closed by a zip (a plain seam)."""
    body = {k: v for k, v in CORSET_SIZES["12"].items() if k != "hip"}
    ease = {"bust": 40.0, "underbust": 20.0, "waist": 20.0, "abdomen": 30.0}
    shares = {
        "bust": (0.28, 0.24, 0.23, 0.25),
        "underbust": (0.27, 0.24, 0.24, 0.25),
        "waist": (0.26, 0.25, 0.24, 0.25),
        "abdomen": (0.26, 0.25, 0.25, 0.24),
    }
    widths = {lv: [round((body[lv] + ease[lv]) / 2 * s, 1) for s in shares[lv]] for lv in shares}
    levels = (Level("bust", 120.0), Level("underbust", 210.0), Level("waist", 315.0), Level("abdomen", 405.0))
    names = (("Centre front", FRONT), ("Side front", FRONT), ("Side back", BACK), ("Centre back", BACK))
    top = [0.0, 40.0, 60.0, 20.0, 20.0]
    bottom = [425.0, 420.0, 415.0, 415.0, 415.0]
    panels = _panels(widths, levels, cf_fold=True, top=top, bottom=bottom, names=names)
    seam_specs = (
        ("Front princess seam", "princess", frozenset(("waist", "abdomen"))),
        ("Side seam", "side", frozenset(("bust", "underbust", "waist", "abdomen"))),
        ("Back princess seam", "princess", frozenset(("bust", "underbust", "waist", "abdomen"))),
    )
    return _demo_block(
        "Fitted evening bodice, four panels",
        "12",
        "bodice",
        levels,
        panels,
        seam_specs,
        centre_front=CF_FOLD,
        centre_back=CB_SEAMED,
    )


DRAWN_BLOCK_FILE = Path(__file__).resolve().parent / "examples" / "wrenfield-underbust-drawn.svg"


def drawn_underbust_block() -> Block:
    """The demo's imported block: an invented four-panel underbust corset, size 10, drawn as SVG with
    curved stitch lines (patterns/examples/wrenfield-underbust-drawn.svg) and read by the block importer.
    Drafted, like the corset run, to the demo size 10 girths less a 5 cm lacing gap."""
    from patterns.core.importing import ImportOptions, import_block

    return import_block(
        DRAWN_BLOCK_FILE.read_bytes(),
        DRAWN_BLOCK_FILE.name,
        ImportOptions(
            name="Underbust corset, four panels (drawn)",
            size="10",
            garment="underbust corset",
            front_panels=2,
            centre_front=CF_BUSK,
            centre_back=CB_LACED,
            seam_allowance_mm=15.0,
        ),
    )


# Invented clients.  Measurements in mm.
_ODALYS_FIRST = {
    "bust_girth": _in("39 1/2"),
    "underbust_girth": _in("33"),
    "waist_girth": _in("32"),
    "abdomen_girth": _in("38"),
    "hip_girth": _in("42"),
    "bust_to_underbust": _in("3 1/2"),
    "underbust_to_waist": _in("4 1/8"),
    "waist_to_abdomen": _in("3 5/8"),
    "waist_to_hip": _in("7 3/4"),
    "bust_span": _in("7 1/2"),
}
DEMO_CLIENTS = (
    {
        "reference": "WF-0101",
        "name": "Hester Quayle",
        "contact": "hester.quayle@example.org",
        "notes": "Close to the size 10 corset. Wants a first corset for a summer wedding.",
        "sessions": [
            {
                "kind": "first",
                "unit": "cm",
                "days_ago": 42,
                "values": {
                    "bust_girth": 955,
                    "underbust_girth": 790,
                    "waist_girth": 742,
                    "abdomen_girth": 905,
                    "hip_girth": 1008,
                    "bust_to_underbust": 88,
                    "underbust_to_waist": 104,
                    "waist_to_abdomen": 92,
                    "waist_to_hip": 192,
                    "centre_front_length": 330,
                    "centre_back_length": 405,
                    "bust_span": 185,
                },
            },
        ],
    },
    {
        "reference": "WF-0102",
        "name": "Odalys Brenneman",
        "contact": "+44 20 7946 0102",
        "notes": "Experienced corset wearer; asks for a strong waist reduction. Wears corsets daily.",
        "sessions": [
            {
                "kind": "first",
                "unit": "in",
                "days_ago": 30,
                "values": _ODALYS_FIRST,
            },
            {
                "kind": "toile",
                "unit": "in",
                "days_ago": 9,
                # At the toile fitting only the bust and waist had changed.
                "values": {**_ODALYS_FIRST, "bust_girth": _in("39 3/8"), "waist_girth": _in("31 3/4")},
            },
        ],
    },
    {
        "reference": "WF-0103",
        "name": "Marguerite Ashdown-Vale",
        "contact": "m.ashdown@example.net",
        "notes": "Full bust, narrow back. Front arcs taken. Evening bodice for a gala.",
        "sessions": [
            {
                "kind": "first",
                "unit": "cm",
                "days_ago": 14,
                "values": {
                    "bust_girth": 1040,
                    "underbust_girth": 795,
                    "waist_girth": 745,
                    "abdomen_girth": 900,
                    "bust_front_arc": 590,
                    "underbust_front_arc": 420,
                    "waist_front_arc": 380,
                    "abdomen_front_arc": 455,
                    "bust_to_underbust": 110,
                    "underbust_to_waist": 100,
                    "waist_to_abdomen": 90,
                    "bust_span": 215,
                    "centre_front_length": 345,
                    "centre_back_length": 395,
                },
            },
        ],
    },
)
