"""Printing: a print job recorded, drawn and kept, and the jobs a worker left or that grew old.

``start_print`` (it issues a draft revision and queues a job) is called by
the view; ``run_print_job`` is what the background task (``fittings.tasks``)
runs in a worker (``manage.py task_worker`` with ATELIER_TASKS=db) or at once
(ImmediateBackend, in development and tests), so no web worker waits for
WeasyPrint.
"""

import logging
import time
from datetime import timedelta

from django.core.exceptions import PermissionDenied
from django.core.files.base import ContentFile
from django.db import transaction
from django.utils import timezone

from atelier.roles import EDITORS, role_of
from fittings.models import PrintFile, PrintJob, PrintKind, PrintStatus, RevisionStatus
from fittings.printing.data import DocumentError, check_printable, document_data
from fittings.printing.registry import DOCUMENTS, draw
from fittings.services.plans import issue_revision
from patterns.core.tiling import PAPER_CHOICES, PAPER_SIZES

logger = logging.getLogger(__name__)


# A print takes seconds.  A job still running after this long lost its worker
# (stopped or restarted half-way) and will never finish; one still queued
# after this long has no worker taking jobs.
WORKER_GONE_AFTER = timedelta(minutes=10)
NO_WORKER_AFTER = timedelta(minutes=2)


class PrintRefused(Exception):
    """Printing was asked for but cannot start; the message says why, in plain words."""


def start_print(*, revision, user, paper: str, kind: str = PrintKind.BOTH, site_url: str = "") -> PrintJob:
    """Issue the revision if it is still a draft, record a print job and queue its drawing."""
    if paper not in PAPER_SIZES:
        raise PrintRefused(f"Choose a paper size: {' or '.join(label for _, label in PAPER_CHOICES)}.")
    if kind not in PrintKind.values:
        raise PrintRefused("Choose what to print: the work order, the cutting sheet or both.")
    with transaction.atomic():
        if revision.status == RevisionStatus.DRAFT:
            if role_of(user) not in EDITORS:  # issuing locks it for the workroom; anyone may print an issued one
                raise PermissionDenied("Only the owner or a fitter can issue a draft revision; ask them to print it.")
            try:
                check_printable(document_data(revision))
            except DocumentError as exc:
                raise PrintRefused(str(exc)) from None
            revision = issue_revision(revision=revision, user=user)
        job = PrintJob.objects.create(
            revision=revision,
            paper=paper,
            kind=kind,
            site_url=site_url[:200],
            created_by=user,
        )
    # Queued after the commit above, so a worker in another process sees the job.
    from fittings.tasks import render_print_job  # the task calls back into this module

    try:
        result = render_print_job.enqueue(job.pk)
    except Exception as exc:
        logger.exception("Could not queue print job %s", job.pk)
        _fail(job.pk, f"The job could not be queued ({type(exc).__name__}). Ask the owner to check the task worker.")
    else:
        PrintJob.objects.filter(pk=job.pk, task_id="").update(task_id=str(result.id)[:64])
    job.refresh_from_db()
    return job


def _fail(job_id: int, message: str) -> None:
    PrintJob.objects.filter(pk=job_id).update(
        status=PrintStatus.FAILED,
        step="",
        error=message,
        finished_at=timezone.now(),
    )


def settle_abandoned(job: PrintJob) -> PrintJob:
    """Fail a job its worker left half-drawn, so the page stops waiting and offers to print again."""
    if job.status == PrintStatus.RUNNING and job.started_at and timezone.now() - job.started_at > WORKER_GONE_AFTER:
        PrintJob.objects.filter(pk=job.pk, status=PrintStatus.RUNNING, started_at=job.started_at).update(
            status=PrintStatus.FAILED,
            step="",
            finished_at=timezone.now(),
            error="The worker stopped while drawing (the app was probably restarted). Print again.",
        )
        job.refresh_from_db()
    return job


def waiting_for_a_worker(job: PrintJob) -> bool:
    """Queued for longer than any worker would leave it: nothing is taking jobs."""
    return job.status == PrintStatus.QUEUED and timezone.now() - job.created_at > NO_WORKER_AFTER


def clear_old_files(*, older_than: timedelta) -> int:
    """Delete the PDFs of prints finished longer ago than ``older_than``; the jobs stay on record.

    An issued revision prints the same pages again, so old files only take
    room (and hold a client's measurements).  Returns how many jobs lost files.
    """
    cutoff = timezone.now() - older_than
    cleared = 0
    old = PrintJob.objects.filter(finished_at__lt=cutoff, files__isnull=False).distinct()
    for job in old.iterator():
        for kept in PrintFile.objects.filter(job=job):
            if kept.file:
                kept.file.storage.delete(kept.file.name)
            kept.delete()
        cleared += 1
    return cleared


def _step(job_id: int, text: str) -> None:
    PrintJob.objects.filter(pk=job_id).update(step=text)


def run_print_job(job_id: int) -> str:
    """Draw the documents of one job and keep them privately; the job row says how it went."""
    claimed = PrintJob.objects.filter(pk=job_id, status=PrintStatus.QUEUED).update(
        status=PrintStatus.RUNNING,
        started_at=timezone.now(),
        step="Reading the revision",
    )
    if not claimed:
        # Unknown, or already taken by another worker: nothing to do.
        return "skipped"
    job = PrintJob.objects.select_related(
        "revision__plan__client",
        "revision__plan__session__measured_by",
        "revision__issued_by",
        "revision__based_on",
    ).get(pk=job_id)
    try:
        data = document_data(job.revision, job.site_url)
        _step(job_id, "Drawing " + " and ".join(f"the {DOCUMENTS[slug].label.lower()}" for slug in job.documents))
        started = time.perf_counter()
        files = draw(data, job.paper, job.documents)
        logger.info("Print job %s: %s drawn in %.2f s", job_id, " and ".join(files), time.perf_counter() - started)
        _step(job_id, "Saving the files")
        with transaction.atomic():
            for slug, content in files.items():
                kept = PrintFile(job=job, document=slug)
                kept.file.save(f"{slug}.pdf", ContentFile(content), save=False)
                kept.save()
            job.status = PrintStatus.DONE
            job.step = ""
            job.finished_at = timezone.now()
            job.save(update_fields=["status", "step", "finished_at"])
    except Exception as exc:
        logger.exception("Print job %s failed", job_id)
        reason = f"{type(exc).__name__}: {exc}"[:400]
        _fail(job_id, f"The documents could not be drawn ({reason}).")
        raise
    return "done"
