"""Parts of the small blocks that tests and benchmarks build by hand (patterns.core types only)."""

from patterns.core.block import Block, Level, Panel, Point, Seam


def level_panel(name, side, left, right, top: float, bottom: float, levels: tuple[Level, ...]) -> Panel:
    """A panel with a straight top and bottom whose corners sit on its stitch lines' first and last level."""
    first, last = levels[0].name, levels[-1].name
    return Panel(
        name=name,
        side=side,
        left=left,
        right=right,
        top_left=Point(left[first], top),
        top_right=Point(right[first], top),
        bottom_left=Point(left[last], bottom),
        bottom_right=Point(right[last], bottom),
    )


def seams_in_a_row(panels, alterable_at, cap_mm: float = 15.0) -> tuple[Seam, ...]:
    """A seam between each panel and the next, numbered: the side seam between the halves,
    princess and plain seams by turns elsewhere; ``alterable_at(i)`` gives seam i's levels."""
    middle = len(panels) // 2 - 1
    return tuple(
        Seam(
            f"Seam {i + 1}",
            "side" if i == middle else ("princess" if i % 2 else "other"),
            a.name,
            b.name,
            alterable_at(i),
            cap_mm,
        )
        for i, (a, b) in enumerate(zip(panels, panels[1:]))
    )


def small_block(name: str, levels, panels, seams, **more) -> Block:
    """A block made for a test: size "T", garment "test"."""
    return Block(name=name, size="T", garment="test", levels=levels, panels=panels, seams=seams, **more)
