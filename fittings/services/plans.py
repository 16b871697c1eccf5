"""Plans and their revisions: where the stored rows meet the allotment engine.

Every save appends a revision holding the whole fitting file (inputs) and
the engine's answer (result).  Two tablets editing one plan are told apart
by the plan's ``version``: a save names the version it started from, and
is refused when another save came first.
"""

from dataclasses import replace

from django.db import transaction
from django.db.models import F
from django.utils import timezone

from fittings import audit
from fittings.models import PinAdjustment, Plan, PlanRevision, RevisionStatus
from fittings.selectors import latest_revision, revision_inputs, session_values
from fittings.services import ConcurrentEdit
from patterns.core.allot import PinAdjustment as Pin
from patterns.core.allot import PlanOptions
from patterns.core.block import Block
from patterns.core.defaults import block_for_unit, default_options
from patterns.core.fitting import allot_measurements, fitting_to_dict, result_to_json
from patterns.selectors import block_for


def _append(plan: Plan, block: Block, values: dict, options: PlanOptions, user, based_on=None) -> PlanRevision:
    result = allot_measurements(block, values, options)
    meta = {"client": plan.client.reference, "garment": plan.garment}
    number = (plan.revisions.order_by("-number").values_list("number", flat=True).first() or 0) + 1
    return PlanRevision.objects.create(
        plan=plan,
        number=number,
        based_on=based_on,
        inputs=fitting_to_dict(values, block, options, meta=meta),
        result=result_to_json(result),
        author=user,
    )


@transaction.atomic
def start_plan(
    *,
    client,
    session,
    pattern,
    garment: str,
    user,
    options: PlanOptions | None = None,
    based_on: PlanRevision | None = None,
) -> Plan:
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
    summary = f"Plan “{garment}” started on {pattern.name}, size {pattern.size_label}, with revision 1."
    after = {
        "garment": garment,
        "base_pattern": pattern.pk,
        "session": session.pk,
        "revision": first.pk,
        "based_on": based_on.pk if based_on else None,
    }
    audit.record(row=plan, user=user, action=audit.CREATE, summary=summary, after=after)
    return plan


def _has_edge(block: Block, override) -> bool:
    return any(
        s.name == override.seam
        and override.panel in (s.front_panel, s.back_panel)
        and override.level in block.level_names
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
    summary = f"Plan {revision.plan_id} revision {revision.number} {how}."
    before = {"plan_version": expected_version}
    after = {"plan_version": expected_version + 1, "revision": revision.number, "based_on": revision.based_on_id}
    audit.record(row=revision, user=user, action=audit.CREATE, summary=summary, before=before, after=after)


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
    summary = f"Plan {revision.plan_id} revision {revision.number} issued to the workroom."
    before, after = {"status": RevisionStatus.DRAFT}, {"status": RevisionStatus.ISSUED}
    audit.record(row=revision, user=user, action=audit.ISSUE, summary=summary, before=before, after=after)
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


@transaction.atomic
def record_pins(*, revision: PlanRevision, pins, note: str, user) -> list[PinAdjustment]:
    """Keep what was pinned at a toile fitting of ``revision``: (seam, level, amount in mm) each."""
    made = PinAdjustment.objects.bulk_create(
        [
            PinAdjustment(revision=revision, seam=seam, level=level, amount_mm=amount, note=note, created_by=user)
            for seam, level, amount in pins
        ]
    )
    summary = f"{len(made)} pin adjustment(s) recorded on plan {revision.plan_id} revision {revision.number}."
    after = {"pins": [{"seam": p.seam, "level": p.level, "amount_mm": str(p.amount_mm)} for p in made], "note": note}
    audit.record(row=revision, object_type="pins", user=user, action=audit.CREATE, summary=summary, after=after)
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
    # Every version of the block with this name and size, the one offered for new plans first: a file
    # made on an older version is taken against that version, as its plans are.
    candidates = list(
        BasePattern.objects.filter(name=block.name, size_label=block.size).order_by("-is_active", "-version")
    )
    if not candidates:
        raise ImportRefused("pattern", f"This atelier has no base pattern “{block.name}”, size {block.size}.")
    pattern = next(
        (c for c in candidates if (stored := block_for(c)) == block or block_for_unit(stored, options.unit) == block),
        None,
    )
    if pattern is None:
        raise ImportRefused(
            "pattern",
            f"The file's “{block.name}”, size {block.size}, differs from the atelier's; "
            "import refused so that no plan is made against the wrong shapes.",
        )
    session = MeasurementSession.objects.create(
        client=client,
        measured_by=user,
        taken_on=tz.localdate(),
        kind="check",
        unit=options.unit,
        notes="Imported from a fitting file.",
    )
    Measurement.objects.bulk_create([Measurement(session=session, code=c, value_mm=v) for c, v in values.items()])
    plan = start_plan(
        client=client, session=session, pattern=pattern, garment=garment or "Imported plan", user=user, options=options
    )
    summary = f"Fitting file imported as session {session.pk} and plan {plan.pk}."
    after = {"session": session.pk, "plan": plan.pk, "measurements_mm": {c: str(v) for c, v in values.items()}}
    audit.record(row=plan, user=user, action=audit.IMPORT, summary=summary, after=after)
    return plan
