"""Invariants of the allotment engine over random valid blocks and bodies (hypothesis)."""

from dataclasses import replace

from hypothesis import assume, given, settings
from hypothesis import strategies as st

from patterns.core.allot import Body, Override, PlanOptions, allot
from patterns.core.block import BACK, FRONT, Block, Level, Panel, Point, Seam
from patterns.core.policies import POLICIES
from patterns.core.rounding import EPS

ALL_LEVELS = ("bust", "underbust", "waist", "abdomen", "hip")
STEPS = (1.0, 1.5875, 2.0, 5.0)  # 1 mm, 1/16 in (1 in = 25.4 mm exactly), coarser steps


@st.composite
def blocks(draw):
    level_names = draw(st.lists(st.sampled_from(ALL_LEVELS), min_size=1, max_size=5, unique=True))
    level_names = [lv for lv in ALL_LEVELS if lv in level_names]
    levels = tuple(Level(name, 100.0 * i) for i, name in enumerate(level_names))
    count = draw(st.integers(2, 8))
    front_count = draw(st.integers(1, count - 1))
    panels, x = [], 0.0
    for i in range(count):
        widths = {lv: draw(st.floats(40, 160)) for lv in level_names}
        left = {lv: x for lv in level_names}
        right = {lv: x + widths[lv] for lv in level_names}
        panels.append(
            Panel(
                name=f"P{i}",
                side=FRONT if i < front_count else BACK,
                left=left,
                right=right,
                top_left=Point(x, -20),
                top_right=Point(x + widths[level_names[0]], -20),
                bottom_left=Point(x, levels[-1].y + 20),
                bottom_right=Point(x + widths[level_names[-1]], levels[-1].y + 20),
            )
        )
        x += 200
    seams = []
    for i, (a, b) in enumerate(zip(panels, panels[1:])):
        at = draw(st.lists(st.sampled_from(level_names), unique=True))
        kind = "side" if i == front_count - 1 else draw(st.sampled_from(("princess", "other")))
        seams.append(Seam(f"S{i}", kind, a.name, b.name, frozenset(at), draw(st.floats(2, 40))))
    return Block(
        "Random",
        "R",
        "test",
        levels,
        tuple(panels),
        tuple(seams),
        centre_back=draw(st.sampled_from(("laced", "seamed"))),
    )


@st.composite
def plans(draw):
    block = draw(blocks())
    gap = draw(st.sampled_from((0.0, 50.0)))
    body = Body(
        girths={
            lv: block.girth(lv) + (gap if block.centre_back == "laced" else 0) + draw(st.floats(-200, 200))
            for lv in block.level_names
        }
    )
    options = PlanOptions(
        ease={lv: draw(st.floats(-80, 40)) for lv in block.level_names},
        lacing_gap_mm=gap,
        step_mm=draw(st.sampled_from(STEPS)),
        policy=draw(st.sampled_from(sorted(POLICIES))),
    )
    return block, body, options


def altered_girth(block, result, level):
    alteration = result.alteration(block)
    return 2 * sum(
        p.width(level) + alteration.shift(p.name, level).left + alteration.shift(p.name, level).right
        for p in block.panels
    )


@settings(max_examples=300, deadline=None)
@given(plans())
def test_it_meets_every_target_within_one_step(plan):
    block, body, options = plan
    result = allot(block, body, options)
    for lv in result.levels:
        if not any(lv.level in s.alterable_at for s in block.seams):
            continue
        assert abs(lv.residual) <= options.step_mm + 1e-6
        assert abs(altered_girth(block, result, lv.level) - (lv.target - lv.residual)) < 1e-6


@settings(max_examples=200, deadline=None)
@given(plans())
def test_it_rounds_every_shift_to_the_step(plan):
    block, body, options = plan
    for s in allot(block, body, options).shifts:
        steps = s.shift_mm / options.step_mm
        assert abs(steps - round(steps)) < 1e-6


@settings(max_examples=200, deadline=None)
@given(plans())
def test_it_mirrors_shifts_when_the_difference_is_mirrored(plan):
    """Letting out by d and taking in by d are the same plan with the signs turned."""
    block, body, options = plan
    options = replace(options, ease={}, lacing_gap_mm=0.0)
    out = Body(girths={lv: block.girth(lv) + (body.girths[lv] - block.girth(lv)) for lv in block.level_names})
    inward = Body(girths={lv: block.girth(lv) - (body.girths[lv] - block.girth(lv)) for lv in block.level_names})
    assume(all(v > 0 for v in inward.girths.values()))
    a, b = allot(block, out, options), allot(block, inward, options)
    assert [s.shift_mm for s in a.shifts] == [-s.shift_mm + 0.0 for s in b.shifts]


@settings(max_examples=200, deadline=None)
@given(blocks(), st.sampled_from(sorted(POLICIES)), st.sampled_from(STEPS))
def test_it_leaves_a_fitting_pattern_alone(block, policy, step):
    gap = 50.0 if block.centre_back == "laced" else 0.0
    body = Body(girths={lv: block.girth(lv) + gap for lv in block.level_names})
    result = allot(block, body, PlanOptions(policy=policy, step_mm=step, lacing_gap_mm=50.0))
    assert all(s.shift_mm == 0 for s in result.shifts)
    assert all(abs(lv.difference) < 1e-9 for lv in result.levels)


@settings(max_examples=200, deadline=None)
@given(plans(), st.data())
def test_it_keeps_fixed_cells_exactly(plan, data):
    block, body, options = plan
    seam = data.draw(st.sampled_from(block.seams))
    level = data.draw(st.sampled_from(block.level_names))
    panel = data.draw(st.sampled_from((seam.front_panel, seam.back_panel)))
    value = data.draw(st.floats(-30, 30))
    result = allot(block, body, replace(options, overrides=(Override(seam.name, level, panel, value),)))
    assert result.shift(seam.name, level, panel) == round(value, 6) + 0.0


@settings(max_examples=300, deadline=None)
@given(plans())
def test_it_never_passes_a_cap_without_saying_so(plan):
    block, body, options = plan
    result = allot(block, body, options)
    caps = {s.name: s.cap_mm for s in block.seams}
    warned = {(f.seam, f.level, f.panel) for f in result.findings if f.code == "edge_over_cap"}
    for s in result.shifts:
        if abs(s.shift_mm) > caps[s.seam] + EPS:
            assert (s.seam, s.level, s.panel) in warned


@settings(max_examples=100, deadline=None)
@given(plans())
def test_it_treats_both_body_halves_alike(plan):
    """One half pattern is cut twice, so every raw edge's share counts twice in the girth."""
    block, body, options = plan
    result = allot(block, body, options)
    for lv in result.levels:
        seam_sum = sum(s.shift_mm for s in result.shifts if s.level == lv.level)
        assert abs(lv.allotted - 2 * seam_sum) < 1e-6


@st.composite
def split_plans(draw):
    """Plans with front arcs measured at some levels, so those levels are worked front and back."""
    block, body, options = draw(plans())
    split = draw(st.lists(st.sampled_from(block.level_names), unique=True, min_size=1))
    arcs = {lv: body.girths[lv] * draw(st.floats(0.3, 0.7)) for lv in split}
    return block, replace(body, front_arcs=arcs), options


@settings(max_examples=400, deadline=None)
@given(split_plans())
def test_it_rounds_a_split_level_once_so_it_is_off_by_at_most_one_step(plan):
    """The documented rule: round the level's total once, then share it between front and back."""
    block, body, options = plan
    result = allot(block, body, options)
    panels = {p.name: p for p in block.panels}
    for lv in result.levels:
        sides = {
            panels[p].side for s in block.seams if lv.level in s.alterable_at for p in (s.front_panel, s.back_panel)
        }
        if lv.front is None or sides != {FRONT, BACK}:
            continue
        assert abs(lv.residual) <= options.step_mm + 1e-6
        assert abs(lv.front.residual + lv.back.residual - lv.residual) < 1e-6
        assert abs(altered_girth(block, result, lv.level) - (lv.target - lv.residual)) < 1e-6
