"""Reads for clients and their fittings."""

import threading
from collections import OrderedDict
from dataclasses import dataclass

from django.db.models import Prefetch, Q

from fittings.models import Client, MeasurementSession, Plan, PlanRevision
from fittings.services import plans as plan_services


def client_search(query: str = ""):
    """Active clients whose reference, name or contact contains ``query``."""
    clients = Client.objects.all()
    query = (query or "").strip()
    if query:
        clients = clients.filter(
            Q(reference__icontains=query) | Q(name__icontains=query) | Q(contact__icontains=query)
        )
    return clients.order_by("name", "reference")


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


class _Decoded:
    """Revisions' inputs and results as the engine's dataclasses, the most recently used kept.

    A saved revision never changes (PlanRevision refuses it), so what was
    decoded once stays right.  The key holds the creation time as well as
    the id, so a row id reused by another database (tests roll back) is a
    different key.
    """

    def __init__(self, size):
        self.size, self.items, self.lock = size, OrderedDict(), threading.Lock()

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


_decoded = _Decoded(KEEP_DECODED)


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


def plan_with_latest(pk: int) -> tuple[Plan, PlanRevision] | None:
    """A plan of an active client with its newest revision, in one query.

    The revision's inputs and result are left in the database (deferred):
    ``revision_inputs`` and ``revision_result`` load them only the first time.
    """
    latest = (
        PlanRevision.objects.select_related("plan__client", "plan__session", "plan__base_pattern")
        .defer("inputs", "result")
        .filter(plan_id=pk, plan__client__is_deleted=False)
        .order_by("-number")
        .first()
    )
    if latest is None:
        return None
    return latest.plan, latest
