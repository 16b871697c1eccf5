import mimetypes

from django import forms
from django.contrib import messages
from django.core.paginator import Paginator
from django.http import FileResponse, Http404
from django.shortcuts import redirect, render
from django.utils.http import url_has_allowed_host_and_scheme
from django.views.decorators.http import require_POST

from atelier.roles import EDITORS, ROLES, WORKROOM, role_of, role_required
from fittings import selectors
from fittings.forms import PhotoField
from fittings.services import clients as client_services

CLIENTS_PER_PAGE = 25


@role_required(*ROLES)
def workroom_queue(request):
    """Issued revisions to cut, newest first: the workroom's page (no contact details, no drafts)."""
    return render(request, "fittings/workroom_queue.html", {"queue": selectors.workroom_queue()})


@role_required(*ROLES)
def client_list(request):
    if role_of(request.user) == WORKROOM:
        return redirect("fittings:workroom_queue")  # the client list (names and contacts) is for fitters
    # NUL cannot be stored or searched for in PostgreSQL text; it is never part of a name.
    query = request.GET.get("q", "").replace("\x00", "").strip()[:100]
    matches = selectors.client_search(query)
    page = Paginator(matches, CLIENTS_PER_PAGE).get_page(request.GET.get("page"))
    partial = request.htmx and not request.htmx.history_restore_request
    template = "fittings/_client_rows.html" if partial else "fittings/client_list.html"
    return render(request, template, {"page": page, "q": query, "more": matches.more, "limit": selectors.MATCH_LIMIT})


# Photos of clients' bodies are for the fitters and the owner; the workroom cuts from the work order.
@role_required(*EDITORS)
def photo_file(request, pk):
    photo = _photo(pk)
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


def _photo(pk):
    photo = selectors.photo(pk)
    if photo is None:
        raise Http404("No such photo.")
    return photo


def _back(request, photo):
    """Where the form was: the page named in ``next`` if it is this site's, else the session's readings."""
    target = request.POST.get("next", "")
    if target.startswith("/") and url_has_allowed_host_and_scheme(target, allowed_hosts={request.get_host()}):
        return redirect(target)
    return redirect("fittings:session_edit", photo.session_id)


class ReplacePhotoForm(forms.Form):
    image = PhotoField(label="New photo")


@require_POST
@role_required(*EDITORS)
def photo_delete(request, pk):
    photo = _photo(pk)
    client_services.delete_photo(photo=photo, user=request.user)
    messages.success(request, f"{photo.get_view_display()} photo deleted.")
    return _back(request, photo)


@require_POST
@role_required(*EDITORS)
def photo_replace(request, pk):
    photo = _photo(pk)
    form = ReplacePhotoForm(request.POST, request.FILES)
    if not form.is_valid():
        error = form.errors["image"][0] if "image" in form.errors else "Choose the new photo."
        if error == forms.Field.default_error_messages["required"]:
            error = "Choose the new photo first, then tap Replace."
        return render(
            request,
            "fittings/photo_refused.html",
            {"photo": photo, "error": error, "next": request.POST.get("next", "")},
            status=400,
        )
    client_services.replace_photo(photo=photo, upload=form.cleaned_data["image"], user=request.user)
    messages.success(request, f"{photo.get_view_display()} photo replaced.")
    return _back(request, photo)
