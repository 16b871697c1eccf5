"""Fabric layouts for a revision: asking for one (a write) and running the solver (the background task).

``request_layout`` checks the request against the revision's pieces, stores
the shelf layout at once and queues the solver; ``run_layout_job`` runs in
the task worker (or at once, with the immediate backend) and stores the
solver's layout with its progress on the way.  Nothing here changes the
revision: the fabric belongs to the layout request.
"""

from __future__ import annotations

import logging
import time
from datetime import timedelta

from django.db import transaction
from django.utils import timezone

from fittings import selectors
from fittings.models import FabricLayout, LayoutStatus
from fittings.previews import altered_for
from patterns.core.layout import (
    DEFAULT_BUDGET_S,
    MAX_BUDGET_S,
    LayerRequest,
    LayoutError,
    Piece,
    Progress,
    check_layers,
    cut_pieces,
    shelf_layers,
    solve_layers_apart,
)
from patterns.core.units import quantize_mm

logger = logging.getLogger(__name__)

# The progress row is written at most this often while the solver runs.
PROGRESS_EVERY_S = 0.5
# A layout takes seconds; one still running after this long lost its worker.
WORKER_GONE_AFTER = timedelta(minutes=10)


def revision_pieces(revision) -> tuple[Piece, ...]:
    """The cut pieces of one layer, from the revision's stored block and result (never recomputed)."""
    _, block, _ = selectors.revision_inputs(revision)
    result = selectors.revision_result(revision)
    return cut_pieces(altered_for(block, result).altered)


def request_layout(
    *, revision, user, layers: list[LayerRequest], gap_mm: float, budget_s: int = DEFAULT_BUDGET_S
) -> FabricLayout:
    """Store a layout request with its shelf layout and queue the solver; LayoutError says what is wrong
    (lengths in the plan's unit)."""
    if not isinstance(budget_s, int) or not 1 <= budget_s <= MAX_BUDGET_S:
        raise LayoutError(f"The time for the layout must be a whole number of seconds from 1 to {MAX_BUDGET_S}.")
    pieces = revision_pieces(revision)
    check_layers(pieces, layers, gap_mm, selectors.revision_inputs(revision)[2].unit)
    shelf = shelf_layers(pieces, layers, gap_mm)
    with transaction.atomic():
        job = FabricLayout.objects.create(
            revision=revision,
            created_by=user,
            budget_s=budget_s,
            gap_mm=quantize_mm(gap_mm),
            layers=[{"layer": r.layer, "width_mm": float(r.width_mm)} for r in layers],
            shelf=[{"layer": r.layer, "layout": r.shelf.to_dict()} for r in shelf],
        )
    # Queued after the commit above, so a worker in another process sees the request (as printing does).
    _queue(job.pk)
    job.refresh_from_db()
    return job


def _queue(job_id: int) -> None:
    from fittings.tasks import solve_fabric_layout

    try:
        result = solve_fabric_layout.enqueue(job_id)
    except Exception as exc:
        logger.exception("Could not queue fabric layout %s", job_id)
        _fail(job_id, f"The layout could not be queued ({type(exc).__name__}); the rows layout is shown.")
    else:
        FabricLayout.objects.filter(pk=job_id, task_id="").update(task_id=str(result.id)[:64])


def _fail(job_id: int, message: str) -> None:
    FabricLayout.objects.filter(pk=job_id).update(status=LayoutStatus.FAILED, error=message, finished_at=timezone.now())


def settle_abandoned(job: FabricLayout) -> FabricLayout:
    """Fail a layout its worker left running, so the page stops waiting (the shelf layout stays)."""
    if job.status == LayoutStatus.RUNNING and job.started_at and timezone.now() - job.started_at > WORKER_GONE_AFTER:
        FabricLayout.objects.filter(pk=job.pk, status=LayoutStatus.RUNNING).update(
            status=LayoutStatus.FAILED,
            finished_at=timezone.now(),
            error="The worker stopped while searching (the app was probably restarted). Ask again.",
        )
        job.refresh_from_db()
    return job


def run_layout_job(job_id: int, *, workers: int | None = None) -> str:
    """Run the solver for one request and store its layouts; the row says how it went."""
    claimed = FabricLayout.objects.filter(pk=job_id, status=LayoutStatus.QUEUED).update(
        status=LayoutStatus.RUNNING, started_at=timezone.now(), progress=0
    )
    if not claimed:
        return "skipped"
    job = FabricLayout.objects.select_related("revision").get(pk=job_id)
    last = [0.0]

    def progress(p: Progress) -> None:
        now = time.monotonic()
        if now - last[0] < PROGRESS_EVERY_S and p.fraction < 1:
            return
        last[0] = now
        FabricLayout.objects.filter(pk=job_id).update(
            progress=min(99, int(100 * p.fraction)), best_length_mm=p.best_length_mm
        )

    try:
        pieces = revision_pieces(job.revision)
        layers = [LayerRequest(d["layer"], float(d["width_mm"])) for d in job.layers]
        started = time.perf_counter()
        results = solve_layers_apart(
            pieces, layers, float(job.gap_mm), budget_s=job.budget_s, progress=progress, workers=workers
        )
        logger.info("Fabric layout %s: %d layers in %.1f s", job_id, len(results), time.perf_counter() - started)
        FabricLayout.objects.filter(pk=job_id).update(
            status=LayoutStatus.DONE,
            progress=100,
            finished_at=timezone.now(),
            best_length_mm=min(r.best.length_mm for r in results),
            solved=[{"layer": r.layer, "layout": r.solver.to_dict()} for r in results],
        )
    except Exception as exc:
        logger.exception("Fabric layout %s failed", job_id)
        _fail(job_id, f"The search stopped ({type(exc).__name__}: {exc})"[:400] + "; the rows layout is shown.")
        raise
    return "done"
