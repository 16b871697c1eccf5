"""What a new plan starts from before the fitter changes anything: one place for each default.

The fitter changes these at every plan; they only save typing.
"""

from dataclasses import replace

from patterns.core.allot import PlanOptions
from patterns.core.block import CB_LACED, Block
from patterns.core.units import DEFAULT_STEP_MM

# Starting ease per garment.  Common practice: a corset sits close at bust and hip and reduces the
# waist, 5 cm being a gentle first reduction; a fitted bodice keeps a few centimetres of wearing
# ease (the bodice figures are from memory).
CORSET_EASE_MM = {"bust": -20.0, "underbust": -20.0, "waist": -50.0, "abdomen": -20.0, "hip": 0.0}
BODICE_EASE_MM = {"bust": 40.0, "underbust": 20.0, "waist": 20.0, "abdomen": 30.0, "hip": 30.0}
LACING_GAP_MM = 50.0  # common practice: about 5 cm
# Plans kept in inches start from the trade's inch values, not converted centimetres (common
# practice): a 2 in lacing gap and a 5/8 in seam allowance where the base pattern has the metric 1.5 cm.
LACING_GAP_INCH_MM = 50.8
SEAM_ALLOWANCE_INCH_MM = 15.875
METRIC_SEAM_ALLOWANCE_MM = 15.0


def is_corset(garment: str) -> bool:
    """A corset of any kind (overbust, underbust, waspie...), whatever the garment's name's case."""
    return "corset" in (garment or "").lower()


def default_options(block: Block, unit: str) -> PlanOptions:
    ease = CORSET_EASE_MM if is_corset(block.garment) else BODICE_EASE_MM
    gap = LACING_GAP_INCH_MM if unit == "in" else LACING_GAP_MM
    return PlanOptions(
        ease={lv: ease.get(lv, 0.0) for lv in block.level_names},
        lacing_gap_mm=gap if block.centre_back == CB_LACED else 0.0,
        step_mm=DEFAULT_STEP_MM[unit],
        unit=unit,
    )


def block_for_unit(block: Block, unit: str) -> Block:
    """The block a plan kept in ``unit`` is cut from: in inches, the metric 1.5 cm allowance becomes 5/8 in."""
    if unit == "in" and abs(block.seam_allowance_mm - METRIC_SEAM_ALLOWANCE_MM) < 1e-9:
        return replace(block, seam_allowance_mm=SEAM_ALLOWANCE_INCH_MM)
    return block
