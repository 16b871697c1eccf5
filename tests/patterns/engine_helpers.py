"""A small block whose arithmetic can be done by hand, for the engine's worked examples."""

from patterns.core.block import BACK, FRONT, Block, Level, Panel, Point, Seam
from tests.patterns.block_parts import small_block

LEVELS = (Level("bust", 0.0), Level("waist", 200.0), Level("hip", 400.0))


def panel(name, side, x0, width=100.0):
    return Panel(
        name=name,
        side=side,
        left={lv.name: x0 for lv in LEVELS},
        right={lv.name: x0 + width for lv in LEVELS},
        top_left=Point(x0, -20),
        top_right=Point(x0 + width, -20),
        bottom_left=Point(x0, 420),
        bottom_right=Point(x0 + width, 420),
    )


def three_panel_block(side_cap=15.0, princess_cap=15.0, side_at=("bust", "waist", "hip"), laced=True) -> Block:
    """Front | Side | Back, each 100 mm wide at every level: half girth 300, girth 600.

    The princess seam (Front|Side) may move only from the waist down, the
    side seam (Side|Back) wherever ``side_at`` says.
    """
    panels = (panel("Front", FRONT, 0.0), panel("Side", FRONT, 150.0), panel("Back", BACK, 300.0))
    seams = (
        Seam("Princess seam", "princess", "Front", "Side", frozenset({"waist", "hip"}), princess_cap),
        Seam("Side seam", "side", "Side", "Back", frozenset(side_at), side_cap),
    )
    return small_block("Test block", LEVELS, panels, seams, centre_back="laced" if laced else "seamed")
