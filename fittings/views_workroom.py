"""The projector page: the altered pieces at 1:1 on the cutting mat, once the screen is calibrated."""

from django.core.exceptions import PermissionDenied
from django.http import HttpResponse
from django.shortcuts import render
from django.views.decorators.http import require_http_methods

from atelier.roles import ROLES, WORKROOM, role_of, role_required
from fittings.views_print import _revision as _any_revision


def _revision(request, plan_id, number):
    """The revision; a draft only for those who may issue it (the workroom sees issued revisions)."""
    revision = _any_revision(plan_id, number)
    if not revision.is_issued and role_of(request.user) == WORKROOM:
        raise PermissionDenied("This revision is a draft: the workroom projects a revision once it is issued.")
    return revision


@role_required(*ROLES)
@require_http_methods(["GET"])
def projector(request, plan_id, number):
    revision = _revision(request, plan_id, number)
    return render(request, "fittings/projector.html", {"revision": revision, "plan": revision.plan})


@role_required(*ROLES)
@require_http_methods(["GET"])
def projector_pieces(request, plan_id, number):
    """The pieces as SVG, one user unit to the millimetre; the page scales it to the calibrated screen."""
    from fittings.printing.data import document_data
    from fittings.workroom import projector_svg

    revision = _revision(request, plan_id, number)
    response = HttpResponse(projector_svg(document_data(revision)), content_type="image/svg+xml; charset=utf-8")
    response["Cache-Control"] = "private, no-store"
    return response
