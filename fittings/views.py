import mimetypes

from django.core.paginator import Paginator
from django.http import FileResponse, Http404
from django.shortcuts import get_object_or_404, render

from atelier.roles import FITTER, OWNER, ROLES, role_required
from fittings import selectors
from fittings.models import Photo

CLIENTS_PER_PAGE = 25


@role_required(*ROLES)
def client_list(request):
    # NUL cannot be stored or searched for in PostgreSQL text; it is never part of a name.
    query = request.GET.get("q", "").replace("\x00", "").strip()[:100]
    matches = selectors.client_search(query)
    page = Paginator(matches, CLIENTS_PER_PAGE).get_page(request.GET.get("page"))
    partial = request.htmx and not request.htmx.history_restore_request
    template = "fittings/_client_rows.html" if partial else "fittings/client_list.html"
    return render(request, template, {"page": page, "q": query, "more": matches.more, "limit": selectors.MATCH_LIMIT})


# Photos of clients' bodies are for the fitters and the owner; the workroom cuts from the work order.
@role_required(OWNER, FITTER)
def photo_file(request, pk):
    photo = get_object_or_404(Photo.objects.select_related("session__client"), pk=pk, session__client__is_deleted=False)
    try:
        handle = photo.image.open("rb")
    except FileNotFoundError:
        raise Http404("The photo file is missing.") from None
    content_type = mimetypes.guess_type(photo.image.name)[0] or ""
    if not content_type.startswith("image/"):
        return FileResponse(handle, as_attachment=True, content_type="application/octet-stream")
    response = FileResponse(handle, content_type=content_type)
    response["Cache-Control"] = "private, max-age=3600"
    return response
