"""Panel previews and seam checks for the plan page, worked out once per distinct input.

Geometry and drawing are the slow part of a recompute, so the allotment
table never waits for them: the page asks for the preview and the seam
checks in their own requests.  Both start from the same altered outlines,
kept in a small in-process store under a hash of the inputs; the drawn SVG
is kept in Django's cache, so the same plan is never drawn twice.
"""

import hashlib
import json
import threading
from collections import OrderedDict
from dataclasses import asdict

from django.core.cache import cache

from patterns.core.allot import Allotment, PlanOptions, allot
from patterns.core.fitting import block_to_dict, body_from_measurements
from patterns.core.outline import AlteredPattern, alter_pattern
from patterns.core.preview import markers_from_findings, preview_svg

CACHE_SECONDS = 24 * 3600
KEEP_PATTERNS = 64


def inputs_key(block, result: Allotment, unit: str = "") -> str:
    parts = (block_to_dict(block), [asdict(s) for s in result.shifts], [asdict(b) for b in result.bands],
             result.centre_front_shift_mm, unit)
    return hashlib.sha256(json.dumps(parts, sort_keys=True, default=str).encode()).hexdigest()


class _Recent:
    """The last few altered patterns, for the preview and the checks of the same recompute."""

    def __init__(self, size):
        self.size = size
        self.items: OrderedDict[str, AlteredPattern] = OrderedDict()
        self.lock = threading.Lock()

    def get_or_make(self, key, make):
        with self.lock:
            if key in self.items:
                self.items.move_to_end(key)
                return self.items[key]
        value = make()
        with self.lock:
            self.items[key] = value
            while len(self.items) > self.size:
                self.items.popitem(last=False)
        return value


_patterns = _Recent(KEEP_PATTERNS)


def altered_for(block, result: Allotment) -> AlteredPattern:
    return _patterns.get_or_make(inputs_key(block, result), lambda: alter_pattern(block, result.alteration(block)))


def preview_for_result(block, result: Allotment, unit: str) -> str:
    key = "preview:" + inputs_key(block, result, unit)
    svg = cache.get(key)
    if svg is None:
        pattern = altered_for(block, result)
        markers = _markers(block, result) + markers_from_findings(pattern.findings)
        svg = preview_svg(block, result.alteration(block), markers=markers, unit=unit, pattern=pattern)
        cache.set(key, svg, CACHE_SECONDS)
    return svg


def computed(block, values: dict, options: PlanOptions) -> Allotment:
    return allot(block, body_from_measurements(values), options)


def preview_for(block, values: dict, options: PlanOptions) -> str:
    return preview_for_result(block, computed(block, values, options), options.unit)


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
