"""Reads for clients and their fittings."""

from dataclasses import dataclass

from django.db import connection
from django.db.models import Prefetch, Q

from atelier.memo import Recent
from fittings.models import Client, MeasurementSession, Plan, PlanRevision
from fittings.search import search_expressions
from fittings.services import plans as plan_services


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
        .filter(condition).values_list("name", "reference", "pk")
    )
    # SQLite orders text by code point, as Python does: sorting here spares it sorting every match.
    rows = list((rows.order_by() if sqlite else rows.order_by("name", "reference"))[: MATCH_LIMIT + 1])
    more = len(rows) > MATCH_LIMIT
    rows = sorted(rows[:MATCH_LIMIT]) if sqlite else rows[:MATCH_LIMIT]
    return ClientMatches(Client.objects.all(), len(rows), more=more, order=[pk for _, _, pk in rows])


@dataclass(frozen=True)
class ClientHistory:
    client: Client
    sessions: list[MeasurementSession]  # newest first, with measurements and photos
    plans: list[Plan]  # newest first, with revisions (oldest first) and their pins


def client_history(client: Client) -> ClientHistory:
    """Everything recorded for a client, in one query per table.

    Sessions, measurements, photos, plans (with their pattern and session),
    revisions and pins: six queries however long the history.
    """
    sessions = list(
        MeasurementSession.objects.filter(client=client)
        .select_related("measured_by")
        .prefetch_related("measurements", "photos")
        .order_by("-taken_on", "-id")
    )
    revisions = PlanRevision.objects.select_related("author", "issued_by").prefetch_related("pins").order_by("number")
    plans = list(
        Plan.objects.filter(client=client)
        .select_related("base_pattern", "session", "created_by")
        .prefetch_related(Prefetch("revisions", queryset=revisions))
        .order_by("-created_at", "-id")
    )
    return ClientHistory(client=client, sessions=sessions, plans=plans)


# --- plan revisions, decoded once ---------------------------------------------------------

KEEP_DECODED = 256


# A saved revision never changes (PlanRevision refuses it), so what was decoded
# once stays right.  The key holds the creation time as well as the id, so a row
# id reused by another database (tests roll back) is a different key.
_decoded = Recent(KEEP_DECODED)


def _revision_key(revision: PlanRevision, part: str):
    return (part, revision.pk, revision.plan_id, revision.number, revision.created_at)


def revision_inputs(revision: PlanRevision):
    """(readings in mm, Block, PlanOptions) of a revision; JSON decoded once per revision and process."""
    values, block, options = _decoded.get_or_make(
        _revision_key(revision, "inputs"), lambda: plan_services.revision_inputs(revision),
    )
    return dict(values), block, options


def revision_result(revision: PlanRevision):
    """The engine's answer saved with a revision, decoded once per revision and process."""
    return _decoded.get_or_make(_revision_key(revision, "result"), lambda: plan_services.revision_result(revision))


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
        .only("id", "number", "status", "issued_at", "created_at", "plan_id", "issued_by__username",
              "issued_by__first_name", "issued_by__last_name", "plan__garment", "plan__client_id",
              "plan__base_pattern__name", "plan__base_pattern__size_label")
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

