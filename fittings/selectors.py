"""Reads for clients and their fittings."""

from dataclasses import dataclass

from django.db.models import Prefetch, Q

from fittings.models import Client, MeasurementSession, Plan, PlanRevision


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
