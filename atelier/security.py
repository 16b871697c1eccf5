"""Request checks that apply to every page, before any view reads the request."""

from django.conf import settings
from django.http import HttpResponse, HttpResponseBadRequest


class RequestSizeLimitMiddleware:
    """Refuse a request body larger than ``ATELIER_MAX_REQUEST_BYTES`` with 413, before it is read.

    Django limits the form fields of a request but not its files, which it
    spools to a temporary folder; without this a single upload could fill the
    disk.  The largest honest request is a session form with three 8 MB photos.
    """

    def __init__(self, get_response):
        self.get_response = get_response

    def __call__(self, request):
        raw = request.META.get("CONTENT_LENGTH") or "0"
        try:
            length = int(raw)
        except ValueError:
            return HttpResponseBadRequest("The request's length is not a number.", content_type="text/plain")
        limit = settings.ATELIER_MAX_REQUEST_BYTES
        if length > limit:
            return HttpResponse(
                f"The request is too large ({length // (1024 * 1024)} MB; at most {limit // (1024 * 1024)} MB). "
                "Photos are limited to 8 MB each.",
                status=413,
                content_type="text/plain",
            )
        return self.get_response(request)
