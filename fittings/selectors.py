"""Reads for clients and their fittings: searches, histories, revisions decoded, sizes ranked.

Nothing here writes; the services (``fittings.services``) may call these, never the reverse.
"""

from dataclasses import dataclass
from datetime import date, datetime

from django.db import connection
from django.db.models import Count, Prefetch, Q

from atelier.memo import Recent
from fittings.models import Client, MeasurementSession, Photo, Plan, PlanRevision, PrintJob
from fittings.search import search_expressions
from patterns.core.defaults import default_options
from patterns.core.fitting import (
    allotment_from_dict,
    block_from_dict,
    body_from_measurements,
    options_from_dict,
)
from patterns.core.sizing import suggest_size
from patterns.selectors import block_for

MATCH_LIMIT = 250
_ASCII_LOWER = str.maketrans("ABCDEFGHIJKLMNOPQRSTUVWXYZ", "abcdefghijklmnopqrstuvwxyz")


class ClientMatches:
    """Active clients a search found, in name order, for a Paginator (``count()`` and slices).

    ``more`` says that more than MATCH_LIMIT clients matched and that only
    MATCH_LIMIT of them are listed.
    """

    def __init__(self, clients, total: int, more: bool = False, order: list[int] | None = None):
        self.clients = clients  # a QuerySet in name order; or, with ``order``, one to pick from by id
        self.total = total
        self.more = more
        self.order = order  # the listed ids in name order, when they were read at once

    def count(self):
        return self.total

    def __getitem__(self, key):
        if self.order is None:
            return self.clients[key]
        ids = self.order[key]
        found = self.clients.in_bulk(ids)
        return [found[pk] for pk in ids if pk in found]


def client_search(query: str = "") -> ClientMatches:
    """Active clients whose name, a later word of the name, reference, reference number or contact starts with ``query``.

    Every start matched has an index (fittings/search.py), and on SQLite the
    query asks for each as a range of that index, so a search reads about as
    many index entries as it finds clients; and it stops reading after
    MATCH_LIMIT + 1.  The ids, names and references found are put in name
    order here, and a page of clients is then read by id.  A search that
    finds more than MATCH_LIMIT lists MATCH_LIMIT of them and says so.
    DEVELOPERS.md ("Search") says why.
    """
    clients = Client.objects.order_by("name", "reference")
    query = (query or "").strip()
    if not query:
        return ClientMatches(clients, clients.count())
    sqlite = connection.vendor == "sqlite"
    # Lower-case the query as the database's LOWER() does: SQLite's changes A-Z only.
    query = query.translate(_ASCII_LOWER) if sqlite else query.lower()
    expressions = search_expressions()
    # In SQLite's order (by code point), "starts with q" is exactly the range from q up to q with its
    # last letter raised, which an index serves.  PostgreSQL may sort by the language's rules, where
    # that is not so: it keeps the plain "starts with".
    ranged = sqlite and ord(query[-1]) < 0x10FFFF
    above = query[:-1] + chr(ord(query[-1]) + 1) if ranged else None
    condition = Q()
    for name in expressions:
        if ranged:
            condition |= Q(**{f"starts_{name}__gte": query, f"starts_{name}__lt": above})
        else:
            condition |= Q(**{f"starts_{name}__startswith": query})
    rows = (
        Client.objects.alias(**{f"starts_{name}": e for name, e in expressions.items()})
        .filter(condition)
        .values_list("name", "reference", "pk")
    )
    # SQLite orders text by code point, as Python does: sorting here spares it sorting every match.
    rows = list((rows.order_by() if sqlite else rows.order_by("name", "reference"))[: MATCH_LIMIT + 1])
    more = len(rows) > MATCH_LIMIT
    rows = sorted(rows[:MATCH_LIMIT]) if sqlite else rows[:MATCH_LIMIT]
    return ClientMatches(Client.objects.all(), len(rows), more=more, order=[pk for _, _, pk in rows])


# --- plan revisions, decoded once ---------------------------------------------------------

KEEP_DECODED = 256


# A saved revision never changes (PlanRevision refuses it), so what was decoded
# once stays right.  The key holds the creation time as well as the id, so a row
# id reused by another database (tests roll back) is a different key.
_decoded = Recent(KEEP_DECODED)


def _revision_key(revision: PlanRevision, part: str):
    return (part, revision.pk, revision.plan_id, revision.number, revision.created_at)


def _decode_inputs(revision: PlanRevision):
    data = revision.inputs
    unit = data.get("unit", "cm")
    return data["measurements"], block_from_dict(data["pattern"]), options_from_dict(data.get("plan", {}), unit)


def revision_inputs(revision: PlanRevision):
    """(readings in mm, Block, PlanOptions) of a revision; JSON decoded once per revision and process."""
    values, block, options = _decoded.get_or_make(_revision_key(revision, "inputs"), lambda: _decode_inputs(revision))
    return dict(values), block, options


def revision_result(revision: PlanRevision):
    """The engine's answer saved with a revision, exactly as computed; decoded once per revision and process."""
    return _decoded.get_or_make(_revision_key(revision, "result"), lambda: allotment_from_dict(revision.result))


def latest_revision(plan: Plan) -> PlanRevision | None:
    return plan.revisions.order_by("-number").first()


def plan_with_latest(pk: int, page: bool = True) -> tuple[Plan, PlanRevision] | None:
    """A plan of an active client with its newest revision, in one query.

    With ``page`` the plan's client, session and base pattern come too, for
    a whole page; the live table and its pictures need only the plan.  The
    revision's inputs and result are left in the database (deferred):
    ``revision_inputs`` and ``revision_result`` load them only the first time.
    """
    related = ("plan__client", "plan__session", "plan__base_pattern") if page else ("plan",)
    latest = (
        PlanRevision.objects.select_related(*related)
        .defer("inputs", "result")
        .filter(plan_id=pk, plan__client__is_deleted=False)
        .order_by("-number")
        .first()
    )
    if latest is None:
        return None
    return latest.plan, latest


QUEUE_LIMIT = 200


def workroom_queue(limit: int = QUEUE_LIMIT) -> list[PlanRevision]:
    """The newest issued revision of every plan of an active client, newest issue first: what is to cut.

    An older issued revision of the same plan has been replaced and is left out.
    No client contact details are read.
    """
    revisions = (
        PlanRevision.objects.filter(status="issued", plan__client__is_deleted=False)
        .select_related("plan__base_pattern", "issued_by")
        .only(
            "id",
            "number",
            "status",
            "issued_at",
            "created_at",
            "plan_id",
            "issued_by__username",
            "issued_by__first_name",
            "issued_by__last_name",
            "plan__garment",
            "plan__client_id",
            "plan__base_pattern__name",
            "plan__base_pattern__size_label",
        )
        .order_by("-issued_at", "-id")
    )
    seen, out = set(), []
    for revision in revisions[: limit * 4]:
        if revision.plan_id in seen:
            continue
        seen.add(revision.plan_id)
        out.append(revision)
        if len(out) >= limit:
            break
    refs = dict(Client.objects.filter(pk__in={r.plan.client_id for r in out}).values_list("pk", "reference"))
    for revision in out:
        revision.client_reference = refs.get(revision.plan.client_id, "")
    return out


# --- a client's history --------------------------------------------------------------------


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
        MeasurementSession.objects.filter(client=client)
        .select_related("measured_by")
        .annotate(measure_count=Count("measurements", distinct=True), photo_count=Count("photos", distinct=True))
        .order_by("-taken_on", "-id")
    )
    revisions = PlanRevision.objects.defer("inputs", "result").order_by("-number")
    plans = list(
        Plan.objects.filter(client=client)
        .select_related("base_pattern", "session")
        .prefetch_related(Prefetch("revisions", queryset=revisions))
        .order_by("-created_at", "-id")
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
    """The session's readings in mm, keyed by measurement code (uses prefetched rows)."""
    return {m.code: float(m.value_mm) for m in session.measurements.all()}


class NotComparable(Exception):
    """The two things asked for cannot be put side by side."""


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


def comparison_pair(client: Client, a: str, b: str):
    """The two sessions (``s12``) or two revisions (``r40``) of this client to put side by side."""
    kind_a, first = _pick(client, a)
    kind_b, second = _pick(client, b)
    if kind_a != kind_b:
        raise NotComparable("Compare a session with a session, or a revision with a revision.")
    return ("sessions" if kind_a == "s" else "revisions"), first, second


# --- sizes ranked for a session ----------------------------------------------------------------


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
            out.append(
                Suggestion(
                    pattern_pk=pk,
                    label=f"{choice.block.name}, size {choice.block.size}",
                    reason=choice.reason,
                    largest_edge_mm=choice.largest_edge_mm,
                    total_edges_mm=choice.total_edges_mm,
                    errors=choice.errors,
                    garment=choice.block.garment,
                    over_cap=choice.over_cap,
                )
            )

    def rank(s):
        return (s.errors, s.over_cap, round(s.largest_edge_mm, 6), round(s.total_edges_mm, 6))

    if garment is None and out:
        garment = min(out, key=rank).garment
    out.sort(key=lambda s: (s.garment != garment, *rank(s)))
    return out


# --- one record for a screen: None where there is none (the views answer 404) ---------------------
# Clients removed from the lists (soft-deleted) are not opened: the owner restores them in the admin.


def active_client(pk: int) -> Client | None:
    return Client.objects.filter(pk=pk).first()


def session_with_readings(pk: int, client: Client | None = None) -> MeasurementSession | None:
    sessions = MeasurementSession.objects.select_related("client").prefetch_related("measurements")
    if client is not None:
        sessions = sessions.filter(client=client)
    return sessions.filter(pk=pk, client__is_deleted=False).first()


def plan_for_page(pk: int) -> Plan | None:
    return (
        Plan.objects.select_related("client", "session", "base_pattern").filter(pk=pk, client__is_deleted=False).first()
    )


def plan_revision(plan: Plan, number: int) -> PlanRevision | None:
    """A revision with its pins; its inputs and result stay in the database unless not decoded yet."""
    return (
        PlanRevision.objects.defer("inputs", "result").prefetch_related("pins").filter(plan=plan, number=number).first()
    )


def revision_for_print(plan: Plan, number: int) -> PlanRevision | None:
    """A revision with everything its printed pages name (client, who measured, who issued, what it came from)."""
    return (
        PlanRevision.objects.select_related("plan__client", "plan__session__measured_by", "issued_by", "based_on")
        .filter(plan=plan, number=number)
        .first()
    )


def revision_for_print_by_plan(plan_id: int, number: int) -> PlanRevision | None:
    """The same, found by the plan's id, for a plan of an active client."""
    return (
        PlanRevision.objects.select_related("plan__client", "plan__session__measured_by", "issued_by", "based_on")
        .filter(plan_id=plan_id, number=number, plan__client__is_deleted=False)
        .first()
    )


def print_jobs():
    """Print jobs with what their pages show (the revision, its plan and client)."""
    return PrintJob.objects.select_related("revision__plan__client")


def client_revision(client: Client, pk: int) -> PlanRevision | None:
    return PlanRevision.objects.select_related("plan").filter(pk=pk, plan__client=client).first()


def latest_plan(client: Client) -> Plan | None:
    return client.plans.select_related("base_pattern").order_by("-created_at").first()


def photo(pk: int) -> Photo | None:
    return Photo.objects.select_related("session__client").filter(pk=pk, session__client__is_deleted=False).first()
