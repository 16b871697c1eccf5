"""The projector page: the altered pieces at 1:1 on the cutting mat, once the screen is calibrated."""

from django.http import HttpResponse
from django.shortcuts import render
from django.views.decorators.http import require_http_methods

from atelier.roles import ROLES, role_required
from fittings.views_print import _revision


@role_required(*ROLES)
@require_http_methods(["GET"])
def projector(request, plan_id, number):
    revision = _revision(plan_id, number)
    return render(request, "fittings/projector.html", {"revision": revision, "plan": revision.plan})


@role_required(*ROLES)
@require_http_methods(["GET"])
def projector_pieces(request, plan_id, number):
    """The pieces as SVG, one user unit to the millimetre; the page scales it to the calibrated screen."""
    from fittings.documents import document_data
    from fittings.workroom import projector_svg

    revision = _revision(plan_id, number)
    response = HttpResponse(projector_svg(document_data(revision)), content_type="image/svg+xml; charset=utf-8")
    response["Cache-Control"] = "private, no-store"
    return response
