"""Downloads of a revision's altered pattern pieces as drawing files (SVG 1:1 in mm, DXF in mm)."""

from django.http import HttpResponse
from django.views.decorators.http import require_GET

from atelier.roles import ROLES, role_required
from fittings import piece_files
from fittings.views_plans import _plan, _revision


def file_response(found: piece_files.PieceFile) -> HttpResponse:
    response = HttpResponse(found.content, content_type=found.content_type)
    response["Content-Disposition"] = f'attachment; filename="{found.filename}"'
    return response


@require_GET
@role_required(*ROLES)
def revision_pieces(request, pk, number, fmt):
    revision = _revision(_plan(pk), number, request.user)  # the workroom: issued revisions only
    return file_response(piece_files.revision_pieces(revision, fmt))
