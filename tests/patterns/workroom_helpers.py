"""A small block whose outlines can be measured by hand: a rectangle, a trapezoid and a slanted back.

Every stitch line is straight (its level points lie on one line, and the
monotone cubic through points on a line is that line), so each length is
Pythagoras on the corners.

    Centre front  x 0..100, y 0..300: a rectangle.
    Side          left x = 100; right from (180, 0) to (150, 300): a trapezoid.
    Back          left from (280, 0) to (320, 300); right x = 400.
    Levels: bust 50, waist 150, hip 250.
"""

from patterns.core.block import BACK, CB_LACED, CF_BUSK, FRONT, Block, ChannelMark, Level, Panel, Point, Seam

LEVELS = (Level("bust", 50.0), Level("waist", 150.0), Level("hip", 250.0))
NAMES = tuple(lv.name for lv in LEVELS)
HEIGHT = 300.0


def _line(x_top: float, x_bottom: float) -> dict[str, float]:
    return {lv.name: x_top + (x_bottom - x_top) * lv.y / HEIGHT for lv in LEVELS}


def _panel(name, side, left_top, left_bottom, right_top, right_bottom) -> Panel:
    return Panel(
        name=name,
        side=side,
        left=_line(left_top, left_bottom),
        right=_line(right_top, right_bottom),
        top_left=Point(left_top, 0.0),
        top_right=Point(right_top, 0.0),
        bottom_left=Point(left_bottom, HEIGHT),
        bottom_right=Point(right_bottom, HEIGHT),
    )


def hand_block(channels=(), centre_front=CF_BUSK, centre_back=CB_LACED) -> Block:
    panels = (
        _panel("Centre front", FRONT, 0.0, 0.0, 100.0, 100.0),
        _panel("Side", FRONT, 100.0, 100.0, 180.0, 150.0),
        _panel("Back", BACK, 280.0, 320.0, 400.0, 400.0),
    )
    seams = (
        Seam("Front seam", "princess", "Centre front", "Side", frozenset(NAMES)),
        Seam("Side seam", "side", "Side", "Back", frozenset(NAMES)),
    )
    return Block(
        "Hand block",
        "T",
        "test corset",
        LEVELS,
        panels,
        seams,
        centre_front=centre_front,
        centre_back=centre_back,
        channels=tuple(channels),
    )


MARKS = (ChannelMark("Side", fraction=0.5), ChannelMark("Back", edge="right", offset_mm=15.0, name="Lacing bone"))
