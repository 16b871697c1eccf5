"""Printing a revision: ask for it, watch it being drawn, download the PDFs."""

from django.conf import settings
from django.core.exceptions import PermissionDenied
from django.http import FileResponse, Http404, HttpResponse
from django.shortcuts import get_object_or_404, redirect, render
from django.utils.text import slugify
from django.views.decorators.http import require_http_methods

from atelier.roles import EDITORS, ROLES, WORKROOM, role_of, role_required
from fittings import selectors
from fittings.forms import PrintForm
from fittings.models import PrintKind, PrintStatus
from fittings.printing.registry import DOCUMENTS
from fittings.services.printing import PrintRefused, settle_abandoned, start_print, waiting_for_a_worker
from patterns.core.tiling import LARGE_FORMATS, TilingError


def default_paper(revision) -> str:
    """Letter for a plan kept in inches, A4 otherwise."""
    return "letter" if revision.inputs.get("unit") == "in" else "a4"


def _revision(plan_id, number):
    revision = selectors.revision_for_print_by_plan(plan_id, number)
    if revision is None:
        raise Http404("No such revision.")
    return revision


def _job(job_id):
    return get_object_or_404(
        selectors.print_jobs(),
        pk=job_id,
        revision__plan__client__is_deleted=False,
    )


@role_required(*ROLES)
@require_http_methods(["GET", "POST"])
def print_start(request, plan_id, number):
    revision = _revision(plan_id, number)
    if not revision.is_issued and role_of(request.user) == WORKROOM:
        raise PermissionDenied(
            "This revision is a draft: the workroom prints a revision once it is issued. "
            "Its fitter issues it from the revision's page."
        )
    status = 200
    if request.method == "POST":
        form = PrintForm(request.POST)
        if form.is_valid():
            try:
                job = start_print(
                    revision=revision,
                    user=request.user,
                    paper=form.cleaned_data["paper"],
                    kind=form.cleaned_data["kind"],
                    site_url=request.build_absolute_uri("/"),
                )
            except PrintRefused as exc:
                form.add_error(None, str(exc))
            else:
                return redirect("fittings:print_status", job.pk)
        status = 400
    else:
        form = PrintForm(initial={"paper": default_paper(revision), "kind": PrintKind.BOTH})
    cannot_print = not revision.is_issued and role_of(request.user) not in EDITORS
    context = {"revision": revision, "form": form, "cannot_print": cannot_print}
    return render(request, "fittings/print/start.html", context, status=status)


@role_required(*ROLES)
@require_http_methods(["GET"])
def print_status(request, job_id):
    job = settle_abandoned(_job(job_id))
    partial = request.htmx and not request.htmx.history_restore_request
    template = "fittings/print/_status.html" if partial else "fittings/print/status.html"
    files = [kept for kept in job.files.all() if kept.file]
    context = {
        "job": job,
        "revision": job.revision,
        "no_worker": waiting_for_a_worker(job),
        "files": files,
        "keep_days": settings.ATELIER_KEEP_PRINTS_DAYS,
        "large_formats": LARGE_FORMATS.values(),
    }
    return render(request, template, context)


def download_name(job, document: str) -> str:
    revision = job.revision
    reference = slugify(revision.plan.client.reference) or "client"
    return f"{document}-{reference}-plan{revision.plan_id}-r{revision.number}-{job.paper}.pdf"


@role_required(*ROLES)
@require_http_methods(["GET"])
def print_download(request, job_id, document):
    if document not in DOCUMENTS:
        raise Http404("No such document.")
    job = _job(job_id)
    file = job.file_of(document)
    if job.status != PrintStatus.DONE or not file:
        raise Http404("This document is not ready.")
    try:
        handle = file.open("rb")
    except FileNotFoundError:
        raise Http404("The document's file is missing; print the revision again.") from None
    response = FileResponse(
        handle, as_attachment=True, filename=download_name(job, document), content_type="application/pdf"
    )
    response["Cache-Control"] = "private, no-store"
    return response


@role_required(*ROLES)
@require_http_methods(["GET"])
def print_large(request, job_id, fmt):
    """All the altered pieces on one large sheet at 1:1 (A0, or a plotter roll), for a print that is ready.

    Drawn when asked for and kept nowhere (one page takes about a tenth of a
    second): nothing to clear or erase later, and the job's own files stay as they were.
    """
    from fittings.printing.data import document_data
    from fittings.workroom import render_large_sheet

    if fmt not in LARGE_FORMATS:
        raise Http404("No such sheet size.")
    job = _job(job_id)
    if job.status != PrintStatus.DONE:
        raise Http404("This print is not ready.")
    try:
        pdf = render_large_sheet(document_data(job.revision, job.site_url), fmt)
    except TilingError as exc:
        return HttpResponse(f"{exc}\n", status=409, content_type="text/plain; charset=utf-8")
    response = HttpResponse(pdf, content_type="application/pdf")
    response["Content-Disposition"] = f'attachment; filename="{download_name(job, "pieces-" + fmt)}"'
    response["Cache-Control"] = "private, no-store"
    return response
