"""A picture of the altered half pattern for the fitting screen and the work order, as SVG.

Built on ``matplotlib.figure.Figure`` with an explicit canvas, never pyplot,
so it is safe in a threaded server.  Colours are from the Okabe-Ito palette,
which stays distinguishable for the common kinds of colour blindness; line
style (dashed against solid) and signs on the numbers carry the meaning too,
so nothing relies on colour alone.

Lines and markers are drawn by matplotlib; the plain labels (level and
panel names, shifts) are written into the SVG as text elements after it.
Laying out a label costs matplotlib about as much as drawing all the lines
(it shapes the text to measure it), while SVG text is anchored by the
viewer, so a preview with fifty labels draws in half the time.
"""

from __future__ import annotations

import io
import re
import threading
from collections.abc import Callable, Iterable, Sequence
from dataclasses import dataclass
from typing import Any, ParamSpec
from xml.sax.saxutils import escape

import matplotlib
import numpy as np
from matplotlib.backends.backend_svg import FigureCanvasSVG
from matplotlib.collections import LineCollection
from matplotlib.figure import Figure
from matplotlib.typing import RcKeyType

from patterns.core.block import LEFT, RIGHT, Alteration, Block
from patterns.core.measures import LEVEL_LABELS
from patterns.core.outline import AlteredPattern, GeometryFinding, alter_pattern
from patterns.core.units import format_cm, format_inches

# Okabe & Ito (2008), "Color Universal Design" (the eight values from memory of that list).
OKABE_ITO = {
    "black": "#000000",
    "orange": "#E69F00",
    "sky_blue": "#56B4E9",
    "bluish_green": "#009E73",
    "yellow": "#F0E442",
    "blue": "#0072B2",
    "vermillion": "#D55E00",
    "reddish_purple": "#CC79A7",
}
ALTERED_COLOUR = OKABE_ITO["blue"]
BASE_COLOUR = OKABE_ITO["orange"]
WARNING_COLOUR = OKABE_ITO["vermillion"]
LEVEL_COLOUR = "#9A9A9A"
TEXT_COLOUR = OKABE_ITO["black"]

# Sized for a 10-inch tablet: the figure is drawn 10 in wide or wider, so
# 9-10 pt text stays near its printed size on the screen.
MIN_WIDTH_IN = 10.0
MM_PER_FIGURE_INCH = 80.0
SHIFT_FONT_PT = 9
# How far below its level a finding's words hang: clear of the shift labels under the level line.
MARKER_DROP_MM = 1.5 + SHIFT_FONT_PT / 72 * 80.0 + 1.5
LABEL_FONT_PT = 10
MARGIN_MM = 12.0
LEGEND_ROOM_MM = 50.0
# Width of an average character of DejaVu Sans, in ems (for room beside the level names).
_EM = 0.62

MINUS = "\u2212"
# Shifts smaller than this are not written on the picture.
ZERO_MM = 0.05
_ZERO = re.compile(r"^[+\-\u2212]?0+([.,]0*)?$")

# Short words for marking findings on the picture; the full message belongs in the page.
SHORT_TEXT = {
    "seam_not_true": "seam not true",
    "outline_self_intersects": "line crosses itself",
    "panel_too_narrow": "too narrow",
    "seam_turns_sharply": "sharp bend",
    "fold_not_straight": "fold not straight",
    "band_too_short": "band too short",
}

# SVG ids of the finding markers' parts (the labels go in under them).
_MARKER_ID = "finding-marker-"
# A finding's place: a warning-coloured triangle, outlined so it shows on any line.
_MARKER_LOOK: dict[str, Any] = {
    "linestyle": "none",
    "marker": "^",
    "markersize": 10,
    "color": WARNING_COLOUR,
    "markeredgecolor": TEXT_COLOUR,
    "markeredgewidth": 0.8,
}

# rcParams are global: hold this while they are changed for one drawing.
_RC_LOCK = threading.Lock()
_RC: dict[RcKeyType, Any] = {
    "svg.hashsalt": "atelier-preview",
    "svg.fonttype": "none",
    "path.simplify": False,
    "font.family": "DejaVu Sans",
    "axes.unicode_minus": True,
}

Marker = tuple[str | None, "str | float | None", str]
P = ParamSpec("P")

# Where the baseline sits for a label aligned at its top or middle, in ems of
# its size: DejaVu Sans capitals stand 0.73 em tall (the font's own metrics,
# from memory).
_CAP_EM = 0.73


@dataclass(frozen=True)
class Label:
    """A plain label at a point of the pattern (mm), aligned as matplotlib's ``ha``/``va`` would."""

    x: float
    y: float
    text: str
    size_pt: float
    ha: str = "left"
    va: str = "baseline"
    bold: bool = False


def shift_formatter(unit: str) -> Callable[[float], str]:
    """Signed text for a shift in millimetres, in the plan's unit ("mm", "cm" or "in")."""
    if unit == "mm":
        return lambda mm: f"{mm:+.0f}"
    if unit == "cm":
        return lambda mm: format_cm(mm, signed=True)
    if unit == "in":
        return lambda mm: format_inches(mm, signed=True)
    raise ValueError(f"Unknown unit {unit!r}; use mm, cm or in.")


def _typeset(text: str) -> str:
    return text.replace("-", MINUS)


def _label_text(fmt: Callable[[float], str], mm: float) -> str:
    """The formatted amount, or "" when it is nothing at the unit's precision."""
    if abs(mm) < ZERO_MM:
        return ""
    text = _typeset(fmt(mm))
    return "" if _ZERO.match(text) else text


def markers_from_findings(findings: Iterable[GeometryFinding]) -> tuple[Marker, ...]:
    """One marker per finding that has a place on a panel."""
    marks = []
    for f in findings:
        if f.panel is None:
            continue
        where = f.level if f.level is not None else f.y
        mark = (f.panel, where, SHORT_TEXT.get(f.code, f.code.replace("_", " ")))
        if mark not in marks:
            marks.append(mark)
    return tuple(marks)


def _segments(outlines) -> list[np.ndarray]:
    return [np.asarray(o.stitch + o.stitch[:1]) for o in outlines]


@dataclass(frozen=True)
class _Frame:
    """The figure round a drawing at true proportion, y downwards, with room for the level names on the
    left and for the legend above."""

    fig: Figure
    ax: Any
    x0: float
    x1: float
    y0: float
    level_names: dict[str, str]

    @classmethod
    def around(cls, pattern: AlteredPattern, drawn: list[np.ndarray]) -> _Frame:
        every = np.concatenate(drawn)
        level_names = {name: LEVEL_LABELS.get(name, name) for name in pattern.level_y}
        room = max(map(len, level_names.values()), default=0) * _EM * LABEL_FONT_PT / 72 * MM_PER_FIGURE_INCH
        x0 = float(every[:, 0].min()) - room - MARGIN_MM
        x1 = float(every[:, 0].max()) + MARGIN_MM
        y0 = float(every[:, 1].min()) - LEGEND_ROOM_MM
        y1 = float(every[:, 1].max()) + MARGIN_MM
        width_in = max(MIN_WIDTH_IN, (x1 - x0) / MM_PER_FIGURE_INCH)
        fig = Figure(figsize=(width_in, width_in * (y1 - y0) / (x1 - x0)))
        ax = fig.add_axes((0, 0, 1, 1))
        ax.set_axis_off()
        ax.set_xlim(x0, x1)
        ax.set_ylim(y1, y0)
        ax.set_aspect("equal")
        return cls(fig, ax, x0, x1, y0, level_names)

    @property
    def legend_row(self) -> float:
        return self.y0 + 8

    def lines(self, solid: list[np.ndarray], dashed: list[np.ndarray], dashed_colour: str, dashed_width: float) -> None:
        """The two kinds of outline, each with its sample in the legend: solid in the first row, dashed below."""
        x0, row = self.x0, self.legend_row
        sample_solid = np.array([[x0 + 3, row], [x0 + 23, row]])
        sample_dashed = np.array([[x0 + 3, row + 12], [x0 + 23, row + 12]])
        self.ax.add_collection(
            LineCollection(
                dashed + [sample_dashed], colors=dashed_colour, linewidths=dashed_width, linestyles=(0, (4, 2.5))
            )
        )
        self.ax.add_collection(LineCollection(solid + [sample_solid], colors=ALTERED_COLOUR, linewidths=1.8))

    def legend(self, solid_text: str, dashed_text: str) -> list[Label]:
        x, row = self.x0 + 26, self.legend_row
        return [
            Label(x, row, solid_text, LABEL_FONT_PT, va="center"),
            Label(x, row + 12, dashed_text, LABEL_FONT_PT, va="center"),
        ]

    def level_lines(self, level_y: dict[str, float]) -> list[Label]:
        """A dotted line across the drawing at every level, and its name above it on the left."""
        x0, x1 = self.x0, self.x1
        across = [np.array([[x0 + 2, y], [x1 - 2, y]]) for y in level_y.values()]
        self.ax.add_collection(LineCollection(across, colors=LEVEL_COLOUR, linewidths=0.8, linestyles=(0, (1, 2))))
        return [
            Label(x0 + 3, y - 1.5, self.level_names[name], LABEL_FONT_PT, va="bottom") for name, y in level_y.items()
        ]


def build_figure(
    block: Block,
    alteration: Alteration,
    markers: Sequence[Marker] = (),
    unit: str = "cm",
    formatter: Callable[[float], str] | None = None,
    pattern: AlteredPattern | None = None,
    amounts: bool = True,
) -> tuple[Figure, tuple[Label, ...]]:
    """The figure (lines and markers) and the labels to write over it; ``pattern`` saves
    recomputing the outlines when the caller has them.

    Without ``amounts`` the shifts and level moves are left off the picture
    (a printed work order lists them in its tables; every label costs time
    to draw)."""
    pattern = pattern or alter_pattern(block, alteration)
    fmt = formatter or shift_formatter(unit)
    base, altered = _segments(pattern.base), _segments(pattern.altered)
    frame = _Frame.around(pattern, base + altered)
    x0 = frame.x0
    frame.lines(altered, base, BASE_COLOUR, 1.2)
    labels = frame.legend("altered", "base pattern")
    labels.append(
        Label(
            x0 + 110,
            frame.legend_row,
            (
                f"Shifts in {unit}: + widens the panel at that edge, or lowers a level."
                if amounts
                else "The amounts are in the tables."
            ),
            LABEL_FONT_PT,
            va="center",
        )
    )
    for name_label, (name, y) in zip(frame.level_lines(pattern.level_y), pattern.level_y.items()):
        labels.append(name_label)
        moved = _label_text(fmt, y - pattern.base_level_y[name]) if amounts else ""
        if moved:
            labels.append(Label(x0 + 3, y + 1.5, f"moved {moved}", SHIFT_FONT_PT, va="top"))

    for outline in pattern.altered:
        top = min(outline.left_line[0][1], outline.right_line[0][1])
        centre = 0.5 * (outline.left_line[0][0] + outline.right_line[0][0])
        labels.append(Label(centre, top - 6, outline.name, LABEL_FONT_PT, ha="center", va="bottom", bold=True))
        if not amounts:
            continue
        left, right = dict(_points_at_levels(outline, LEFT)), dict(_points_at_levels(outline, RIGHT))
        for level in outline.level_y:
            shift = alteration.shift(outline.name, level)
            for edge, value, at in ((LEFT, shift.left, left), (RIGHT, shift.right, right)):
                if level not in at:
                    continue
                text = _label_text(fmt, value)
                if not text:
                    continue
                x, y = at[level]
                if edge == LEFT:
                    labels.append(Label(x + 2, y - 1.5, text, SHIFT_FONT_PT, va="bottom"))
                else:
                    labels.append(Label(x - 2, y + 1.5, text, SHIFT_FONT_PT, ha="right", va="top"))

    _draw_markers(frame.ax, pattern, markers)
    return frame.fig, tuple(labels)


def _points_at_levels(outline, edge):
    for notch in outline.notches:
        if notch.edge == edge:
            yield notch.level, notch.point
    if outline.on_fold and edge == LEFT:
        line = np.asarray(outline.left_line)
        for level, y in outline.level_y.items():
            i = int(np.argmin(np.abs(line[:, 1] - y)))
            yield level, (float(line[i, 0]), float(line[i, 1]))


def _draw_markers(ax, pattern: AlteredPattern, markers: Sequence[Marker]) -> None:
    by_name = {o.name: o for o in pattern.altered}
    xs, ys = [], []
    for panel, where, text in markers:
        outline = by_name.get(panel) if panel is not None else None
        if outline is None:
            continue
        if isinstance(where, str):
            y = pattern.level_y.get(where)
        elif where is None:
            y = None
        else:
            y = float(where)
        line_l, line_r = np.asarray(outline.left_line), np.asarray(outline.right_line)
        if y is None:
            y = 0.5 * (line_l[0, 1] + line_l[-1, 1])
        xl = np.interp(y, line_l[:, 1], line_l[:, 0])
        xr = np.interp(y, line_r[:, 1], line_r[:, 0])
        x = 0.5 * (xl + xr)
        xs.append(x)
        ys.append(y)
        # Below the edges' amounts, which hang from the level line on the right edge (a label is
        # SHIFT_FONT_PT tall: 9 pt at 80 mm to the figure inch is 10 mm of pattern).
        ax.text(
            x,
            y + MARKER_DROP_MM,
            _typeset(text),
            fontsize=SHIFT_FONT_PT,
            ha="center",
            va="top",
            color=TEXT_COLOUR,
            fontweight="bold",
            gid=f"{_MARKER_ID}label-{len(xs)}",
            bbox={"boxstyle": "round,pad=0.2", "facecolor": "white", "edgecolor": WARNING_COLOUR, "linewidth": 1.2},
        )
    if xs:
        ax.plot(xs, ys, **_MARKER_LOOK, gid=f"{_MARKER_ID}points")


def _as_svg(draw: Callable[P, tuple[Figure, tuple[Label, ...]]]) -> Callable[P, str]:
    """``draw``'s figure as SVG text, its labels written in under the markers (which must stay readable over
    everything); the same input gives the same bytes."""

    def svg(*args: P.args, **kwargs: P.kwargs) -> str:
        buf = io.BytesIO()
        with _RC_LOCK, matplotlib.rc_context(_RC):
            fig, labels = draw(*args, **kwargs)
            FigureCanvasSVG(fig).print_svg(buf, metadata={"Date": None})
        text = buf.getvalue().decode("utf-8")
        at = text.find(f'<g id="{_MARKER_ID}')
        at = text.rindex("</svg>") if at < 0 else at
        return text[:at] + _labels_svg(fig, labels) + text[at:]

    svg.__doc__ = f"The figure of ``{draw.__name__}`` as SVG text."
    return svg


preview_svg = _as_svg(build_figure)


_ANCHOR = {"left": "start", "center": "middle", "right": "end"}


def _labels_svg(fig: Figure, labels: Sequence[Label]) -> str:
    """The labels as SVG text, placed where the drawn axes put their points (in the SVG's points)."""
    if not labels:
        return ""
    ax = fig.axes[0]
    to_pt = 72.0 / fig.dpi
    height_pt = fig.get_figheight() * 72.0
    at = ax.transData.transform([(label.x, label.y) for label in labels])
    out = [f' <g id="labels" style="fill: {TEXT_COLOUR}">\n']
    for label, (x, y) in zip(labels, at):
        baseline = height_pt - y * to_pt + {"top": _CAP_EM, "center": _CAP_EM / 2}.get(label.va, 0.0) * label.size_pt
        weight = " font-weight: bold;" if label.bold else ""
        out.append(
            f'  <text x="{x * to_pt:.2f}" y="{baseline:.2f}" style="font: {label.size_pt:g}px \'DejaVu Sans\';'
            f'{weight} text-anchor: {_ANCHOR[label.ha]}">{escape(label.text)}</text>\n'
        )
    out.append(" </g>\n")
    return "".join(out)


CUTTING_COLOUR = OKABE_ITO["bluish_green"]


def _block_figure(block: Block, markers: Sequence[Marker] = ()) -> tuple[Figure, tuple[Label, ...]]:
    """A base pattern as drawn while it is typed in: stitch lines solid, cutting lines dashed
    (they meet the stitch line along a bound edge or a fold), levels, grainlines and names."""
    pattern = alter_pattern(block, Alteration(shifts={}))
    stitch = _segments(pattern.base)
    cutting = [np.asarray(o.cutting + o.cutting[:1]) for o in pattern.base]
    frame = _Frame.around(pattern, stitch + cutting)
    frame.lines(stitch, cutting, CUTTING_COLOUR, 1.0)
    grains = [np.asarray(o.grainline) for o in pattern.base]
    frame.ax.add_collection(LineCollection(grains, colors=TEXT_COLOUR, linewidths=0.8))
    level_labels = frame.level_lines(pattern.level_y)
    labels = frame.legend(
        "stitch line",
        f"cutting line ({block.seam_allowance_mm / 10:g} cm seam allowance; none along a bound edge or a fold)",
    )
    labels += level_labels
    for outline, panel in zip(pattern.base, block.panels):
        top = min(y for _, y in outline.cutting)
        centre = 0.5 * (outline.left_line[0][0] + outline.right_line[0][0])
        labels.append(Label(centre, top - 3, outline.name, LABEL_FONT_PT, ha="center", va="bottom", bold=True))
        bound = [edge for edge, on in (("top", panel.top_bound), ("bottom", panel.bottom_bound)) if on]
        (gx, gy0), (_, gy1) = outline.grainline
        middle = 0.5 * (gy0 + gy1)
        labels.append(Label(gx + 2, middle - 2, outline.labels[-1], SHIFT_FONT_PT, va="bottom"))
        if bound:
            labels.append(Label(gx + 2, middle + 2, "bound " + ", ".join(bound), SHIFT_FONT_PT, va="top"))
    _draw_markers(frame.ax, pattern, markers)
    return frame.fig, tuple(labels)


block_svg = _as_svg(_block_figure)
