"""The plan as plain text: the table a fitter used to keep on paper."""

from patterns.core.allot import Allotment
from patterns.core.block import Block
from patterns.core.measures import LEVEL_LABELS
from patterns.core.units import format_length


def direction(mm: float) -> str:
    """The workroom's words for a shift's sign."""
    if mm > 0:
        return "let out"
    if mm < 0:
        return "take in"
    return "no change"


def plan_table(result: Allotment, block: Block) -> str:
    unit = result.unit
    lines = [f"{result.block}, size {result.size}  (lengths in {unit}; + lets out, - takes in)", ""]
    head = f"{'Level':<20}{'Body':>9}{'Ease':>9}{'Target':>9}{'Pattern':>9}{'Diff':>9}{'Seams':>9}{'Left':>9}"
    lines += [head, "-" * len(head)]
    for lv in result.levels:

        def f(v, signed=False):
            return "-" if v is None else format_length(v, unit, signed=signed)

        lines.append(
            f"{LEVEL_LABELS.get(lv.level, lv.level):<20}{f(lv.body):>9}{f(lv.ease, True):>9}{f(lv.target):>9}"
            f"{f(lv.pattern):>9}{f(lv.difference, True):>9}{f(lv.allotted + lv.centre_front, True):>9}{f(lv.residual, True):>9}"
        )
    if result.centre_front_shift_mm:
        lines += [
            "",
            f"Centre front: {direction(result.centre_front_shift_mm)} "
            f"{format_length(abs(result.centre_front_shift_mm), unit)} {unit} at the centre-front edge, every level.",
        ]
    lines += ["", "Raw edges (one body half):"]
    levels = block.level_names
    head = f"{'Seam':<22}{'Edge of':<16}" + "".join(f"{LEVEL_LABELS.get(lv, lv)[:9]:>10}" for lv in levels)
    lines += [head, "-" * len(head)]
    for seam in block.seams:
        for panel in (seam.front_panel, seam.back_panel):
            cells = []
            for level in levels:
                edge = next((s for s in result.shifts if (s.seam, s.level, s.panel) == (seam.name, level, panel)), None)
                if edge is None:
                    cells.append(f"{'.':>10}")
                else:
                    mark = "*" if edge.fixed else ("p" if edge.pin_mm else "")
                    cells.append(f"{format_length(edge.shift_mm, unit, signed=True) + mark:>10}")
            lines.append(f"{seam.name[:21]:<22}{panel[:15]:<16}" + "".join(cells))
    lines.append("  (. = not altered at this level, * = fixed by hand, p = includes toile pins)")
    if result.bands:
        lines += ["", "Lengths between levels:"]
        for b in result.bands:
            lines.append(
                f"  {LEVEL_LABELS[b.upper]} to {LEVEL_LABELS[b.lower]}: {direction(b.change_mm).replace('let out', 'lengthen').replace('take in', 'shorten')} "
                f"{format_length(abs(b.change_mm), unit)} {unit}"
            )
    if result.findings:
        lines += ["", "Please read:"]
        for finding in result.findings:
            lines.append(f"  [{finding.severity}] {finding.code}: {finding.message}")
    return "\n".join(lines) + "\n"
