"""Rounding shifts to the plan's step without losing a step along the way.

Each value is rounded towards zero to a whole number of steps, then the
steps still missing from the rounded total go, one each, to the values with
the largest remainders (the largest-remainder method).  The rounded values
therefore always sum exactly to the rounded total.
"""

import math

EPS = 1e-9


def steps_of(value: float, step: float) -> int:
    """Nearest whole number of steps, halves away from zero."""
    scaled = abs(value) / step
    return int(math.copysign(math.floor(scaled + 0.5 + EPS), value)) if scaled else 0


def round_to_step(
    values: list[float], step: float, caps: list[float | None] | None = None, steps: int | None = None
) -> list[float]:
    """Round ``values`` (all of one sign) to multiples of ``step``, summing to the rounded total
    (or to ``steps`` whole steps, the total's own rounding down or up, when the caller rounded it).

    A value may only take an extra step if that keeps it within its cap;
    values at their cap give way to the others, and take the step only when
    no other value can.
    """
    if step <= 0:
        raise ValueError("The rounding step must be positive.")
    if not values:
        return []
    total = sum(values)
    sign = -1.0 if total < 0 else 1.0
    magnitudes = [max(sign * v, 0.0) / step for v in values]
    target = abs(steps_of(total, step) if steps is None else steps)
    counts = [math.floor(m + EPS) for m in magnitudes]
    missing = target - sum(counts)
    caps = caps or [None] * len(values)

    def room(i: int) -> bool:
        cap = caps[i]
        return cap is None or (counts[i] + 1) * step <= cap + EPS

    order = sorted(range(len(values)), key=lambda i: (-(magnitudes[i] - math.floor(magnitudes[i] + EPS)), i))
    while missing > 0:
        preferred = [i for i in order if room(i)] or order
        for i in preferred[:missing]:
            counts[i] += 1
        missing -= min(missing, len(preferred))
    while missing < 0:
        for i in sorted(order, key=lambda i: -counts[i])[:-missing]:
            counts[i] -= 1
        missing = target - sum(counts)
    return [sign * c * step for c in counts]
