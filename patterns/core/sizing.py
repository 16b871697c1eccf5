"""Which size of a run suits a client best: the one that needs the least alteration, and why."""

from dataclasses import dataclass, replace

from patterns.core.allot import Allotment, Body, PlanOptions, allot
from patterns.core.block import Block


@dataclass(frozen=True)
class SizeChoice:
    block: Block
    allotment: Allotment
    errors: int
    over_cap: int
    largest_edge_mm: float
    total_edges_mm: float
    reason: str = ""


def suggest_size(blocks: list[Block], body: Body, options: PlanOptions) -> list[SizeChoice]:
    """Rank the sizes of a run by how little they need altering; the first is the suggestion.

    Hand-fixed cells and pins belong to one size and are left out of the comparison.
    """
    plain = replace(options, overrides=(), pins=(), centre_front_width_mm=options.centre_front_width_mm)
    choices = []
    for block in blocks:
        result = allot(block, body, plain)
        choices.append(
            SizeChoice(
                block=block,
                allotment=result,
                errors=len(result.errors),
                over_cap=sum(1 for f in result.findings if f.code == "edge_over_cap"),
                largest_edge_mm=result.largest_edge_mm(),
                total_edges_mm=result.total_edges_mm(),
            )
        )
    choices.sort(
        key=lambda c: (
            c.errors,
            c.over_cap,
            round(c.largest_edge_mm, 6),
            round(c.total_edges_mm, 6),
            c.block.size_order,
        )
    )
    if choices:
        best = choices[0]
        text = (
            f"Size {best.block.size} needs the least alteration: the largest single raw edge moves "
            f"{best.largest_edge_mm:.0f} mm and all raw edges together {best.total_edges_mm:.0f} mm"
        )
        if best.errors:
            text += f", though it still has {best.errors} problem(s) to resolve"
        elif best.over_cap == 0:
            text += ", with every edge within its limit"
        if len(choices) > 1:
            nxt = choices[1]
            text += (
                f". Next: size {nxt.block.size} (largest edge {nxt.largest_edge_mm:.0f} mm, "
                f"all edges {nxt.total_edges_mm:.0f} mm)."
            )
        else:
            text += "."
        choices[0] = replace(best, reason=text)
    return choices
