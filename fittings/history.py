"""Reads for a client's history: the timeline, the latest readings, and two fittings side by side."""

from dataclasses import dataclass, field
from datetime import date, datetime

from django.db.models import Count, Prefetch
from django.utils.formats import date_format

from fittings.models import Client, MeasurementSession, Plan, PlanRevision
from patterns.core.fitting import allotment_from_dict
from patterns.core.measures import LEVEL_LABELS, MEASURES
from patterns.core.units import DEFAULT_STEP_MM, format_length


@dataclass(frozen=True)
class TimelineItem:
    kind: str  # "session" or "plan"
    when: datetime | date
    obj: object


def client_timeline(client: Client) -> list[TimelineItem]:
    """Sessions and plans, newest first, in three queries however long the history.

    Plan revisions come without their inputs and results, which the
    timeline does not show.
    """
    sessions = list(
        MeasurementSession.objects.filter(client=client).select_related("measured_by")
        .annotate(measure_count=Count("measurements", distinct=True), photo_count=Count("photos", distinct=True))
        .order_by("-taken_on", "-id")
    )
    revisions = PlanRevision.objects.defer("inputs", "result").order_by("-number")
    plans = list(
        Plan.objects.filter(client=client).select_related("base_pattern", "session")
        .prefetch_related(Prefetch("revisions", queryset=revisions)).order_by("-created_at", "-id")
    )
    items = [TimelineItem("session", s.taken_on, s) for s in sessions]
    items += [TimelineItem("plan", p.created_at.date(), p) for p in plans]
    items.sort(key=lambda item: (item.when, item.kind == "plan"), reverse=True)
    return items


def latest_session(client: Client, before: MeasurementSession | None = None):
    sessions = MeasurementSession.objects.filter(client=client).prefetch_related("measurements")
    if before is not None:
        sessions = sessions.exclude(pk=before.pk).filter(taken_on__lte=before.taken_on)
    return sessions.order_by("-taken_on", "-id").first()


def session_values(session: MeasurementSession) -> dict[str, float]:
    return {m.code: float(m.value_mm) for m in session.measurements.all()}


class NotComparable(Exception):
    """The two things asked for cannot be put side by side."""


@dataclass
class CompareRow:
    label: str
    a: str
    b: str
    change: str
    differs: bool


@dataclass
class Comparison:
    kind: str  # "sessions" or "revisions"
    a_title: str
    b_title: str
    unit: str
    sections: list[tuple[str, list[CompareRow]]] = field(default_factory=list)


def _on_tape(mm: float, unit: str) -> float:
    """The reading to the tape's step (1 mm, or 1/16 in): what the fitter can tell apart."""
    step = DEFAULT_STEP_MM[unit]
    return round(mm / step) * step


def _row(label, a, b, unit):
    """A changed row is one whose readings differ on the tape: below its step (1 mm, 1/16 in) is no change."""
    text_a = "–" if a is None else format_length(a, unit)
    text_b = "–" if b is None else format_length(b, unit)
    differs = (a is None) != (b is None) or (a is not None and _on_tape(a, unit) != _on_tape(b, unit))
    change = ""
    if a is not None and b is not None and differs:
        change = format_length(_on_tape(b, unit) - _on_tape(a, unit), unit, signed=True)
    return CompareRow(label, text_a, text_b, change, differs)


def _day(value) -> str:
    """A date as every page writes it (the locale's, e.g. 2 Dec 2026), never ISO."""
    return date_format(value)


def _pick(client, token):
    if len(token) < 2 or token[0] not in "sr" or not (token[1:].isascii() and token[1:].isdigit()):
        raise NotComparable("Choose two sessions or two revisions to compare.")
    pk = int(token[1:])
    if token[0] == "s":
        obj = MeasurementSession.objects.filter(client=client, pk=pk).prefetch_related("measurements").first()
    else:
        obj = PlanRevision.objects.filter(plan__client=client, pk=pk).select_related("plan").first()
    if obj is None:
        raise NotComparable("One of the two is not in this client's history.")
    return token[0], obj


def comparison(client: Client, a: str, b: str) -> Comparison:
    kind_a, first = _pick(client, a)
    kind_b, second = _pick(client, b)
    if kind_a != kind_b:
        raise NotComparable("Compare a session with a session, or a revision with a revision.")
    if kind_a == "s":
        unit = second.unit
        va, vb = session_values(first), session_values(second)
        rows = [_row(m.label, va.get(m.code), vb.get(m.code), unit) for m in MEASURES if m.code in va or m.code in vb]
        return Comparison("sessions", f"{first.get_kind_display()}, {_day(first.taken_on)}",
                          f"{second.get_kind_display()}, {_day(second.taken_on)}", unit, [("Measurements", rows)])
    ra, rb = allotment_from_dict(first.result), allotment_from_dict(second.result)
    unit = rb.unit
    ma, mb = first.inputs["measurements"], second.inputs["measurements"]
    measurements = [_row(m.label, ma.get(m.code), mb.get(m.code), unit) for m in MEASURES if m.code in ma or m.code in mb]
    la = {lv.level: lv for lv in ra.levels}
    lb = {lv.level: lv for lv in rb.levels}
    levels = [lv for lv in LEVEL_LABELS if lv in la or lv in lb]
    targets = []
    for lv in levels:
        x, y = la.get(lv), lb.get(lv)
        targets.append(_row(f"{LEVEL_LABELS[lv]} ease", x and x.ease, y and y.ease, unit))
        targets.append(_row(f"{LEVEL_LABELS[lv]} target", x and x.target, y and y.target, unit))
    sa = {(s.seam, s.level, s.panel): s.shift_mm for s in ra.shifts}
    sb = {(s.seam, s.level, s.panel): s.shift_mm for s in rb.shifts}
    keys = list(dict.fromkeys([*sa, *sb]))
    shifts = [
        _row(f"{seam}, {panel} edge, {LEVEL_LABELS.get(level, level).lower()}", sa.get((seam, level, panel)),
             sb.get((seam, level, panel)), unit)
        for seam, level, panel in keys
    ]
    return Comparison(
        "revisions", f"{first.plan.garment}, revision {first.number}", f"{second.plan.garment}, revision {second.number}",
        unit, [("Measurements", measurements), ("Ease and targets", targets), ("Raw edges", shifts)],
    )
