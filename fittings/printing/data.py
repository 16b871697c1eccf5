"""Reading a revision for printing: plain data (:class:`DocumentData`) and what every document shows.

``document_data(revision, base_url)`` reads the database once; the renderers
(fittings.printing.work_order, .cutting_sheet, fittings.workroom) draw from
that plain data alone, with no database.
"""

from __future__ import annotations

from dataclasses import dataclass
from datetime import date, datetime

from django.conf import settings
from django.urls import NoReverseMatch, reverse
from django.utils import timezone

from fittings.fabric import print_layers
from fittings.previews import altered_for
from fittings.wording import in_unit
from patterns.core import layout as layout_core
from patterns.core.allot import Allotment, PlanOptions
from patterns.core.block import Block
from patterns.core.boning import BoningRules
from patterns.core.findings import CAUTION, ERROR, WARNING
from patterns.core.lacing import LacingRules
from patterns.core.layout import layer_label
from patterns.core.outline import AlteredPattern
from patterns.core.report import direction
from patterns.core.tiling import paper_size
from patterns.core.units import UNIT_LABELS, format_length

# Shown whenever a plan reduces the waist; the fitter's and the client's
# judgment come first (common practice).
WAIST_REDUCTION_CAUTION = (
    "Waist reduction: lacing a corset to reduce the waist restricts breathing and can injure. "
    "Plan gradual wear, building up the hours and the reduction over weeks; check the client's comfort "
    "at every fitting; loosen at once on pain, numbness, dizziness or shortness of breath. "
    "The fitter's judgment and local practice come first."
)
SEVERITY_WORDS = {ERROR: "Problem", WARNING: "Check", CAUTION: "Caution"}

# Layers of fabric cut from each panel (common practice: a corset has an
# outer fabric, a strength layer and a lining; a bodice an outer and a lining).
CORSET_LAYERS = tuple(layer_label(code) for code in layout_core.CORSET_LAYERS)
BODICE_LAYERS = tuple(layer_label(code) for code in layout_core.BODICE_LAYERS)


class DocumentError(ValueError):
    """A revision that cannot be printed, with the reason in plain words."""


@dataclass(frozen=True)
class DocumentData:
    """Everything the printed documents show, as plain data."""

    atelier_name: str
    client_label: str
    garment: str
    fitting_date: date | None
    measured_by: str
    revision_number: int
    revision_status: str  # "draft" or "issued"
    issued_at: datetime | None
    issued_by: str
    based_on: int | None
    revision_url: str
    measurements: dict[str, float]
    block: Block
    options: PlanOptions
    result: Allotment
    # How this atelier bones and laces (atelier.models.AtelierSettings), read when printing.
    boning_rules: BoningRules = BoningRules()
    lacing_rules: LacingRules = LacingRules()
    # Per layer, the fabric layout asked for on the revision (fittings.fabric.LayerLayout); empty: rows
    # on fabric of the default width, worked out when the work order is drawn.
    fabric_layouts: tuple = ()

    @property
    def unit(self) -> str:
        return self.result.unit

    @property
    def is_issued(self) -> bool:
        return self.revision_status == "issued"


def _person(user) -> str:
    if user is None:
        return ""
    return user.get_full_name() or user.get_username()


def revision_path(plan_id: int, number: int) -> str:
    """Where the app shows this revision: its page if the app has one, else its print page."""
    for name in ("fittings:revision_detail", "fittings:print_start"):
        try:
            return reverse(name, args=[plan_id, number])
        except NoReverseMatch:
            continue
    return f"/plans/{plan_id}/revisions/{number}/print/"


def client_label(client) -> str:
    """The client's reference; their full name too only where the atelier allows it on paper."""
    if getattr(settings, "ATELIER_PRINT_CLIENT_NAME", False):
        return f"{client.reference} {client.name}"
    return client.reference


def document_data(revision, base_url: str = "") -> DocumentData:
    """Read a revision (with its plan, client and session) into plain data for printing."""
    from fittings.selectors import revision_inputs, revision_result

    plan = revision.plan
    session = plan.session
    from atelier.models import AtelierSettings

    measurements, block, options = revision_inputs(revision)
    result = revision_result(revision)
    workroom = AtelierSettings.current()
    return DocumentData(
        atelier_name=settings.ATELIER_NAME,
        client_label=client_label(plan.client),
        garment=plan.garment,
        fitting_date=session.taken_on if session else None,
        measured_by=_person(session.measured_by) if session else "",
        revision_number=revision.number,
        revision_status=revision.status,
        issued_at=revision.issued_at,
        issued_by=_person(revision.issued_by),
        based_on=revision.based_on.number if revision.based_on_id else None,
        revision_url=base_url.rstrip("/") + revision_path(plan.pk, revision.number),
        measurements=dict(measurements),
        block=block,
        options=options,
        result=result,
        boning_rules=workroom.boning_rules(),
        lacing_rules=workroom.lacing_rules(),
        fabric_layouts=print_layers(revision),
    )


def altered_pattern(data: DocumentData) -> AlteredPattern:
    """The outlines the stored result gives for the stored block (shared with the plan page's preview)."""
    return altered_for(data.block, data.result)


def _paper_css(paper: str) -> str:
    """The CSS name of the page size (CSS Paged Media: A4, letter)."""
    return paper_size(paper).css_name


def _header(data: DocumentData) -> dict:
    status = "Issued" if data.is_issued else "Draft, not issued: do not cut from this copy"
    return {
        "atelier_name": data.atelier_name,
        "client_label": data.client_label,
        "garment": data.garment,
        "fitting_date": data.fitting_date,
        "measured_by": data.measured_by,
        "pattern_name": data.block.name,
        "size": data.block.size,
        "revision_number": data.revision_number,
        "revision_status": status,
        "is_issued": data.is_issued,
        "issued_at": timezone.localtime(data.issued_at) if data.issued_at else None,
        "issued_by": data.issued_by,
        "based_on": data.based_on,
        "unit_label": "centimetres (to 1 mm)" if data.unit == "cm" else "inches (to 1/16 in)",
        "unit": UNIT_LABELS[data.unit],
    }


def has_waist_reduction(data: DocumentData) -> bool:
    return data.options.ease.get("waist", 0.0) < 0 or any(
        lv.level == "waist" and lv.ease < 0 for lv in data.result.levels
    )


def cautions(data: DocumentData) -> list[str]:
    """Cautions in words, for the top of both documents."""
    found = [WAIST_REDUCTION_CAUTION] if has_waist_reduction(data) else []
    found += [in_unit(f.message, data.unit) for f in data.result.findings if f.severity == CAUTION]
    return found


def check_printable(data: DocumentData) -> None:
    """Refuse a plan the engine found errors in: the workroom must not cut from it."""
    errors = [f.message for f in data.result.findings if f.severity == ERROR]
    if errors:
        raise DocumentError("This revision has problems to resolve before it can be printed: " + " ".join(errors))


def _fmt(mm, unit, signed=False) -> str:
    return "–" if mm is None else format_length(mm, unit, signed=signed)


def shift_words(mm: float, unit: str) -> str:
    """'let out 0.4', 'take in 3/16', 'no change': a shift in the workroom's words."""
    if format_length(abs(mm), unit) in ("0.0", "0"):
        return "no change"
    return f"{direction(mm)} {format_length(abs(mm), unit)}"
