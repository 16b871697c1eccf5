"""Plans and their revisions: where the stored rows meet the allotment engine.

Every save appends a revision holding the whole fitting file (inputs) and
the engine's answer (result).  Two tablets editing one plan are told apart
by the plan's ``version``: a save names the version it started from, and
is refused when another save came first.
"""

from dataclasses import dataclass, replace

from django.db import transaction
from django.db.models import F
from django.utils import timezone

from fittings import audit
from fittings.models import PinAdjustment, Plan, PlanRevision, RevisionStatus
from patterns.core.allot import Allotment, PlanOptions, allot, suggest_size
from patterns.core.allot import PinAdjustment as Pin
from patterns.core.block import CB_LACED, Block
from patterns.core.fitting import (
    allotment_from_dict, block_from_dict, body_from_measurements, fitting_to_dict, options_from_dict, result_to_json,
)
from patterns.core.units import DEFAULT_STEP_MM
from patterns.selectors import block_for

# Starting ease per garment, changed by the fitter at every plan.  Common
# practice: a corset sits close at bust and hip and reduces the waist, 5 cm
# being a gentle first reduction; a fitted bodice keeps a few centimetres of
# wearing ease (the bodice figures are from memory).
CORSET_EASE_MM = {"bust": -20.0, "underbust": -20.0, "waist": -50.0, "abdomen": -20.0, "hip": 0.0}
BODICE_EASE_MM = {"bust": 40.0, "underbust": 20.0, "waist": 20.0, "abdomen": 30.0, "hip": 30.0}
LACING_GAP_MM = 50.0
# Plans kept in inches start from the trade's inch values, not converted centimetres (common practice):
# a 2 in lacing gap and a 5/8 in seam allowance where the base pattern has the metric 1.5 cm.
LACING_GAP_INCH_MM = 50.8
SEAM_ALLOWANCE_INCH_MM = 15.875
METRIC_SEAM_ALLOWANCE_MM = 15.0


class ConcurrentEdit(Exception):
    """Someone else saved this first; nothing was overwritten."""


class RevisionIssued(Exception):
    """An issued revision cannot be edited."""


def session_values(session) -> dict[str, float]:
    """The session's readings in mm, keyed by measurement code (uses prefetched rows)."""
    return {m.code: float(m.value_mm) for m in session.measurements.all()}


def block_for_unit(block: Block, unit: str) -> Block:
    """The block a plan kept in ``unit`` is cut from: in inches, the metric 1.5 cm allowance becomes 5/8 in."""
    if unit == "in" and abs(block.seam_allowance_mm - METRIC_SEAM_ALLOWANCE_MM) < 1e-9:
        return replace(block, seam_allowance_mm=SEAM_ALLOWANCE_INCH_MM)
    return block


def default_options(block: Block, unit: str) -> PlanOptions:
    ease = CORSET_EASE_MM if "corset" in block.garment else BODICE_EASE_MM
    gap = LACING_GAP_INCH_MM if unit == "in" else LACING_GAP_MM
    return PlanOptions(
        ease={lv: ease.get(lv, 0.0) for lv in block.level_names},
        lacing_gap_mm=gap if block.centre_back == CB_LACED else 0.0,
        step_mm=DEFAULT_STEP_MM[unit],
        unit=unit,
    )


def compute(block: Block, values: dict[str, float], options: PlanOptions) -> Allotment:
    return allot(block, body_from_measurements(values), options)


def revision_inputs(revision: PlanRevision) -> tuple[dict[str, float], Block, PlanOptions]:
    data = revision.inputs
    unit = data.get("unit", "cm")
    return data["measurements"], block_from_dict(data["pattern"]), options_from_dict(data.get("plan", {}), unit)


def revision_result(revision: PlanRevision) -> Allotment:
    return allotment_from_dict(revision.result)


def latest_revision(plan: Plan) -> PlanRevision | None:
    return plan.revisions.order_by("-number").first()


def _append(plan: Plan, block: Block, values: dict, options: PlanOptions, user, based_on=None) -> PlanRevision:
    result = compute(block, values, options)
    meta = {"client": plan.client.reference, "garment": plan.garment}
    number = (plan.revisions.order_by("-number").values_list("number", flat=True).first() or 0) + 1
    return PlanRevision.objects.create(
        plan=plan, number=number, based_on=based_on,
        inputs=fitting_to_dict(values, block, options, meta=meta),
        result=result_to_json(result), author=user,
    )


@transaction.atomic
def start_plan(*, client, session, pattern, garment: str, user, options: PlanOptions | None = None,
               based_on: PlanRevision | None = None) -> Plan:
    """A new plan with its first draft revision.

    Starting from an earlier revision carries its options into the new
    plan, measured against the new session.
    """
    block = block_for(pattern)
    if options is None and based_on is not None:
        options = revision_inputs(based_on)[2]
        options = replace(options, overrides=tuple(o for o in options.overrides if _has_edge(block, o)), pins=())
    if options is None:
        options = default_options(block, session.unit)
    block = block_for_unit(block, options.unit)
    plan = Plan.objects.create(client=client, session=session, base_pattern=pattern, garment=garment, created_by=user)
    first = _append(plan, block, session_values(session), options, user)
    audit.record(user=user, action=audit.CREATE, object_type="plan", object_id=plan.pk, client=client,
                 summary=f"Plan “{garment}” started on {pattern.name}, size {pattern.size_label}, with revision 1.",
                 after={"garment": garment, "base_pattern": pattern.pk, "session": session.pk, "revision": first.pk,
                        "based_on": based_on.pk if based_on else None})
    return plan


def _has_edge(block: Block, override) -> bool:
    return any(
        s.name == override.seam and override.panel in (s.front_panel, s.back_panel) and override.level in block.level_names
        for s in block.seams
    )


@transaction.atomic
def save_revision(*, plan: Plan, options: PlanOptions, user, expected_version: int) -> PlanRevision:
    """Append a revision with new options, if nobody saved this plan since ``expected_version``."""
    if not Plan.objects.filter(pk=plan.pk, version=expected_version).update(version=F("version") + 1):
        raise ConcurrentEdit(
            "Someone saved this plan while you were working on it. Your changes were not saved; "
            "their revision is kept. Reload the plan to see it, then make your changes again."
        )
    plan.refresh_from_db(fields=["version"])
    latest = latest_revision(plan)
    block = block_for_unit(block_for(plan.base_pattern), options.unit)
    revision = _append(plan, block, session_values(plan.session), options, user, based_on=latest)
    _audit_revision(revision, user, expected_version, f"saved from revision {latest.number if latest else '-'}")
    return revision


def _audit_revision(revision: PlanRevision, user, expected_version: int, how: str) -> None:
    plan = revision.plan
    audit.record(user=user, action=audit.CREATE, object_type="revision", object_id=revision.pk,
                 client_reference=plan.client.reference,
                 summary=f"Plan {plan.pk} revision {revision.number} {how}.",
                 before={"plan_version": expected_version},
                 after={"plan_version": expected_version + 1, "revision": revision.number,
                        "based_on": revision.based_on_id})


@transaction.atomic
def issue_revision(*, revision: PlanRevision, user) -> PlanRevision:
    """Lock a draft for the workroom.  Issuing an issued revision changes nothing."""
    revision = PlanRevision.objects.select_for_update().get(pk=revision.pk)
    if revision.status == RevisionStatus.ISSUED:
        return revision
    revision.status = RevisionStatus.ISSUED
    revision.issued_at = timezone.now()
    revision.issued_by = user
    revision.save()
    audit.record(user=user, action=audit.ISSUE, object_type="revision", object_id=revision.pk,
                 client_reference=revision.plan.client.reference,
                 summary=f"Plan {revision.plan_id} revision {revision.number} issued to the workroom.",
                 before={"status": RevisionStatus.DRAFT}, after={"status": RevisionStatus.ISSUED})
    return revision


@transaction.atomic
def revision_with_pins(*, revision: PlanRevision, user, expected_version: int) -> PlanRevision:
    """The next revision: the tried-on revision's options plus the pins recorded against it."""
    plan = revision.plan
    values, block, options = revision_inputs(revision)
    pins = tuple(Pin(p.seam, p.level, float(p.amount_mm)) for p in revision.pins.all())
    options = replace(options, pins=options.pins + pins)
    if not Plan.objects.filter(pk=plan.pk, version=expected_version).update(version=F("version") + 1):
        raise ConcurrentEdit("Someone saved this plan while you were recording pins. Reload and try again.")
    new = _append(plan, block, values, options, user, based_on=revision)
    _audit_revision(new, user, expected_version, f"made from the pins on revision {revision.number}")
    return new


@dataclass(frozen=True)
class Suggestion:
    pattern_pk: int
    label: str
    reason: str
    largest_edge_mm: float
    total_edges_mm: float
    errors: int
    garment: str = ""
    over_cap: int = 0


def suggestions_for_session(session, patterns, garment: str | None = None) -> list[Suggestion]:
    """For every run of base patterns, its sizes ranked for this session's readings, least alteration first.

    The sizes of ``garment`` (a base pattern's garment kind) come first, in
    the engine's order (problems, edges over their limit, largest edge, all
    edges); the other garments' after them, in the same order.  Without
    ``garment`` the garment of the best size overall is taken.
    """
    values = session_values(session)
    patterns = list(patterns.prefetch_related("levels", "panels__lines", "seams"))
    runs: dict[object, list] = {}
    for pattern in patterns:
        runs.setdefault(pattern.size_run_id or f"single-{pattern.pk}", []).append(pattern)
    out = []
    for members in runs.values():
        blocks = {p.pk: block_for(p) for p in members}
        pattern_of = {id(block): pk for pk, block in blocks.items()}
        first = blocks[members[0].pk]
        options = default_options(first, session.unit)
        for choice in suggest_size(list(blocks.values()), body_from_measurements(values), options):
            pk = pattern_of[id(choice.block)]
            out.append(Suggestion(
                pattern_pk=pk, label=f"{choice.block.name}, size {choice.block.size}",
                reason=choice.reason, largest_edge_mm=choice.largest_edge_mm,
                total_edges_mm=choice.total_edges_mm, errors=choice.errors, garment=choice.block.garment,
                over_cap=choice.over_cap,
            ))

    def rank(s):
        return (s.errors, s.over_cap, round(s.largest_edge_mm, 6), round(s.total_edges_mm, 6))

    if garment is None and out:
        garment = min(out, key=rank).garment
    out.sort(key=lambda s: (s.garment != garment, *rank(s)))
    return out


@transaction.atomic
def record_pins(*, revision: PlanRevision, pins, note: str, user) -> list[PinAdjustment]:
    """Keep what was pinned at a toile fitting of ``revision``: (seam, level, amount in mm) each."""
    made = PinAdjustment.objects.bulk_create([
        PinAdjustment(revision=revision, seam=seam, level=level, amount_mm=amount, note=note, created_by=user)
        for seam, level, amount in pins
    ])
    audit.record(user=user, action=audit.CREATE, object_type="pins", object_id=revision.pk,
                 client_reference=revision.plan.client.reference,
                 summary=f"{len(made)} pin adjustment(s) recorded on plan {revision.plan_id} revision {revision.number}.",
                 after={"pins": [{"seam": p.seam, "level": p.level, "amount_mm": str(p.amount_mm)} for p in made],
                        "note": note})
    return made


class ImportRefused(ValueError):
    """A fitting file that cannot be taken in, with the field at fault."""

    def __init__(self, field: str, message: str):
        self.field, self.message = field, message
        super().__init__(f"{field}: {message}")


@transaction.atomic
def import_fitting(*, client, text: str, user, garment: str = "") -> Plan:
    """Take in a fitting file: a new session with its readings and a plan with its options.

    The file's base pattern must be one the atelier keeps (same name and size);
    the stored pattern is used, so a file cannot bring in a pattern of its own.
    """
    from django.utils import timezone as tz

    from fittings.models import Measurement, MeasurementSession
    from patterns.core.fitting import FittingFileError, load_fitting_text
    from patterns.models import BasePattern

    try:
        values, block, options = load_fitting_text(text)
    except FittingFileError as exc:
        raise ImportRefused(exc.field, exc.message) from exc
    pattern = BasePattern.objects.filter(name=block.name, size_label=block.size).first()
    if pattern is None:
        raise ImportRefused("pattern", f"This atelier has no base pattern “{block.name}”, size {block.size}.")
    stored = block_for(pattern)
    if stored != block and block_for_unit(stored, options.unit) != block:
        raise ImportRefused("pattern", f"The file's “{block.name}”, size {block.size}, differs from the atelier's; "
                                       "import refused so that no plan is made against the wrong shapes.")
    session = MeasurementSession.objects.create(client=client, measured_by=user, taken_on=tz.localdate(), kind="check",
                                                unit=options.unit, notes="Imported from a fitting file.")
    Measurement.objects.bulk_create([Measurement(session=session, code=c, value_mm=v) for c, v in values.items()])
    plan = start_plan(client=client, session=session, pattern=pattern, garment=garment or "Imported plan",
                      user=user, options=options)
    audit.record(user=user, action=audit.IMPORT, object_type="plan", object_id=plan.pk, client=client,
                 summary=f"Fitting file imported as session {session.pk} and plan {plan.pk}.",
                 after={"session": session.pk, "plan": plan.pk, "measurements_mm": {c: str(v) for c, v in values.items()}})
    return plan
