"""Panel previews for the plan page, drawn once per distinct input.

Drawing is the slow part of a recompute, so the table never waits for it:
the page asks for the preview in its own request, and the same inputs are
never drawn twice (kept in Django's cache under a hash of the inputs).
"""

import hashlib
import json
from dataclasses import asdict

from django.core.cache import cache

from patterns.core.allot import Allotment, PlanOptions, allot
from patterns.core.fitting import block_to_dict, body_from_measurements
from patterns.core.preview import preview_svg

CACHE_SECONDS = 24 * 3600


def _key(*parts) -> str:
    text = json.dumps(parts, sort_keys=True, default=str)
    return "preview:" + hashlib.sha256(text.encode()).hexdigest()


def preview_for_result(block, result: Allotment, unit: str) -> str:
    key = _key(block_to_dict(block), [asdict(s) for s in result.shifts], [asdict(b) for b in result.bands],
               result.centre_front_shift_mm, unit)
    svg = cache.get(key)
    if svg is None:
        svg = preview_svg(block, result.alteration(block), markers=_markers(block, result), unit=unit)
        cache.set(key, svg, CACHE_SECONDS)
    return svg


def preview_for(block, values: dict, options: PlanOptions) -> str:
    return preview_for_result(block, allot(block, body_from_measurements(values), options), options.unit)


def _markers(block, result: Allotment):
    """Engine findings that belong to a place on a panel, as (panel, level, short text)."""
    markers = []
    for finding in result.findings:
        if finding.severity == "caution" or not finding.level:
            continue
        panel = finding.panel or next(
            (s.back_panel for s in block.seams if s.name == finding.seam), block.panels[0].name,
        )
        markers.append((panel, finding.level, finding.code.replace("_", " ")))
    return tuple(markers)
