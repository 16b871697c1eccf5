"""The engine and the demo blocks checked against outside references."""

from fractions import Fraction

from patterns.core.allot import Body, PlanOptions, allot
from patterns.core.sizing import suggest_size
from patterns.core.units import MM_PER_INCH
from patterns.demo import CORSET_SIZES, LACING_GAP_MM, corset_run
from tests.patterns.engine_helpers import three_panel_block


def inches(text):
    parts = text.split()
    return float((Fraction(parts[0]) + (Fraction(parts[1]) if len(parts) > 1 else 0)) * Fraction(MM_PER_INCH))


# ASTM D5585-11e1, Table 1 (adult female misses, inch-pound values): bust, underbust, waist (curvy).
ASTM_D5585 = {
    "8": ("36 1/4", "30", "28"),
    "10": ("37 1/4", "31", "29"),
    "12": ("38 3/4", "32 1/2", "30 3/4"),
    "14": ("40 3/8", "34", "32 1/2"),
}


def test_it_spreads_a_girth_change_over_two_edges_and_two_halves():
    # Common practice (grading texts): a girth change is halved for one body half,
    # and a seam's share splits between its two raw edges.  With only the side
    # seam free, 40 mm of girth is 10 mm on each of its two edges.
    block = three_panel_block(side_at=("bust", "waist", "hip"))
    body = Body(girths={"bust": 690, "waist": 650, "hip": 650})
    result = allot(block, body, PlanOptions())
    assert result.shift("Side seam", "bust", "Side") == 10.0
    assert result.shift("Side seam", "bust", "Back") == 10.0


def test_it_suggests_the_size_a_standard_body_was_drafted_for():
    # Bodies taken from ASTM D5585-11 Table 1; abdomen and hip from the demo's
    # own table (memory).  With no ease and the usual 5 cm lacing gap (common
    # practice), the size drafted from that row needs no alteration at all.
    run = corset_run()
    for size, (bust, underbust, waist) in ASTM_D5585.items():
        body = Body(
            girths={
                "bust": inches(bust),
                "underbust": inches(underbust),
                "waist": inches(waist),
                "abdomen": CORSET_SIZES[size]["abdomen"],
                "hip": CORSET_SIZES[size]["hip"],
            }
        )
        choices = suggest_size(run, body, PlanOptions(lacing_gap_mm=LACING_GAP_MM))
        assert choices[0].block.size == size
        assert choices[0].largest_edge_mm <= 1.0
        assert f"Size {size}" in choices[0].reason


def test_it_moves_to_the_next_size_between_two_rows():
    # Half-way between sizes 10 and 12 of ASTM D5585-11 the ranking keeps both at the top.
    body = Body(girths={lv: (CORSET_SIZES["10"][lv] + CORSET_SIZES["12"][lv]) / 2 for lv in CORSET_SIZES["10"]})
    top_two = {c.block.size for c in suggest_size(corset_run(), body, PlanOptions())[:2]}
    assert top_two == {"10", "12"}
