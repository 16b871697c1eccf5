"""Panel previews and seam checks for the plan page, worked out once per distinct input.

Geometry and drawing are the slow part of a recompute, so the allotment
table never waits for them: the page asks for the preview and the seam
checks in their own requests.  Both start from the same altered outlines,
kept in a small in-process store under a hash of the inputs (a second
request for the same outlines waits for the first instead of working them
out again).  The drawn SVG goes to the "previews" cache, a folder shared by
all the server's processes, so the same plan is never drawn twice whichever
process is asked.
"""

import hashlib
import json
import weakref

from django.core.cache import caches

from atelier.memo import Recent
from fittings.wording import short_words
from patterns.core.allot import Allotment
from patterns.core.fitting import block_to_dict
from patterns.core.outline import AlteredPattern, alter_pattern
from patterns.core.preview import markers_from_findings, preview_svg

CACHE_SECONDS = 24 * 3600
KEEP_PATTERNS = 64


def _block_digest(block) -> str:
    """The block's part of a key; worked out once per Block object (decoded blocks are kept and reused)."""
    key = id(block)
    found = _digests.get(key)
    if found is not None and found[0]() is block:
        return found[1]
    digest = hashlib.sha256(json.dumps(block_to_dict(block), sort_keys=True, default=str).encode()).hexdigest()
    if len(_digests) > 4 * KEEP_PATTERNS:
        _digests.clear()
    _digests[key] = (weakref.ref(block), digest)
    return digest


_digests: dict[int, tuple] = {}


def inputs_key(block, result: Allotment, unit: str = "") -> str:
    """A hash of everything a drawing depends on: block, shifts, bands, centre front, markers and unit."""
    parts = (
        _block_digest(block),
        [(s.seam, s.level, s.panel, s.shift_mm) for s in result.shifts],
        [(b.upper, b.lower, b.change_mm) for b in result.bands],
        result.centre_front_shift_mm,
        preview_markers(block, result) if unit else (),
        unit,
    )
    return hashlib.sha256(json.dumps(parts, default=str).encode()).hexdigest()


_patterns = Recent(KEEP_PATTERNS)


def altered_for(block, result: Allotment) -> AlteredPattern:
    return _patterns.get_or_make(inputs_key(block, result), lambda: alter_pattern(block, result.alteration(block)))


def preview_lookup(block, result: Allotment, unit: str) -> tuple[str, bool]:
    """The preview SVG and whether it came from the cache (drawn earlier, by any process)."""
    cache = caches["previews"]
    key = "preview:" + inputs_key(block, result, unit)
    svg = cache.get(key)
    if svg is not None:
        return svg, True
    pattern = altered_for(block, result)
    markers = preview_markers(block, result) + markers_from_findings(pattern.findings)
    svg = preview_svg(block, result.alteration(block), markers=markers, unit=unit, pattern=pattern)
    cache.set(key, svg, CACHE_SECONDS)
    return svg, False


def preview_markers(block, result: Allotment):
    """Engine findings that belong to a place on a panel, as (panel, level, short text)."""
    markers = []
    fixed = {}
    for s in result.shifts:
        if s.fixed:
            fixed.setdefault(s.level, s.panel)
    for finding in result.findings:
        if finding.severity == "caution" or not finding.level:
            continue
        panel = finding.panel
        if panel is None and finding.seam is None and finding.level in fixed:
            panel = fixed[finding.level]  # a finding about the cells fixed by hand: on the panel of the fixed cell
        if panel is None:
            panel = next((s.back_panel for s in block.seams if s.name == finding.seam), block.panels[0].name)
        markers.append((panel, finding.level, short_words(finding.code)))
    return tuple(markers)
