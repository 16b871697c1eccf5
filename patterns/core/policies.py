"""How a level's change is spread over the free raw edges: the plan's choice, one entry per way.

A policy gives each free raw edge a weight and, optionally, the seam kinds to fill in turn
(each up to its edges' caps before the next).  Every policy fills edges up to their cap and
then spreads what is left over all of them, beyond their caps, so the girth is always met
(the engine warns about each edge beyond its cap).  A new way of spreading is one entry in
``POLICIES`` (and its name in the fitting file's schema).
"""

import math
from collections.abc import Callable
from dataclasses import dataclass

from patterns.core.block import Panel, Seam
from patterns.core.rounding import EPS

EVEN, SIDES_FIRST, BY_WIDTH = "even", "sides_first", "by_width"


@dataclass(frozen=True)
class Policy:
    label: str
    weight: Callable[[Seam, Panel, str], float]  # (seam, the edge's panel, level) -> weight
    tiers: tuple[str, ...] = ()  # seam kinds filled in turn; empty: all free edges at once


POLICIES: dict[str, Policy] = {
    EVEN: Policy("Evenly over every free raw edge", weight=lambda seam, panel, level: 1.0),
    SIDES_FIRST: Policy(
        "Side seams first, then princess seams, then the rest",
        weight=lambda seam, panel, level: 1.0,
        tiers=("side", "princess", "other"),
    ),
    BY_WIDTH: Policy(
        "In proportion to each panel's width", weight=lambda seam, panel, level: max(panel.width(level), EPS)
    ),
}
POLICY_CHOICES = [(name, policy.label) for name, policy in POLICIES.items()]


def distribute(level, half, free, policy, panels) -> dict[tuple[str, str, str], float]:
    """Spread one body half's share over the free raw edges ``(seam, panel name)``, within caps where possible."""
    rule = POLICIES[policy]
    keys = [(s.name, level, p) for s, p in free]
    caps = {k: s.cap_mm for k, (s, p) in zip(keys, free)}
    weights = {k: rule.weight(s, panels[p], level) for k, (s, p) in zip(keys, free)}
    if rule.tiers:
        kinds = {k: s.kind for k, (s, p) in zip(keys, free)}
        tiers = [[k for k in keys if kinds[k] == kind] for kind in rule.tiers]
    else:
        tiers = [keys]
    result = {k: 0.0 for k in keys}
    remaining = half
    for tier in tiers:
        if abs(remaining) <= EPS:
            break
        remaining = _fill(tier, remaining, weights, caps, result)
    if abs(remaining) > EPS:
        # Every edge is at its cap: go beyond, evenly by weight, and let the warning say so.
        total_weight = sum(weights.values())
        for k in keys:
            result[k] += remaining * weights[k] / total_weight
    return result


def _fill(tier, amount, weights, caps, result) -> float:
    """Water-filling: share ``amount`` by weight, capping edges that would pass their cap."""
    active = [k for k in tier if abs(result[k]) < caps[k] - EPS]
    remaining = amount
    while active and abs(remaining) > EPS:
        total_weight = sum(weights[k] for k in active)
        shares = {k: remaining * weights[k] / total_weight for k in active}
        capped = [k for k in active if abs(result[k] + shares[k]) > caps[k] + EPS]
        if not capped:
            for k in active:
                result[k] += shares[k]
            return 0.0
        for k in capped:
            target = math.copysign(caps[k], remaining)
            remaining -= target - result[k]
            result[k] = target
        active = [k for k in active if k not in capped]
    return remaining
