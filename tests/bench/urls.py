"""The app's URLs plus two floor pages, for the benchmark server only (see tests/bench/settings.py).

The floors go through the same middleware and the same signed-in session as
the app's pages, so a ratio against them measures the app's own work.
"""

from django import forms
from django.http import HttpResponse
from django.shortcuts import render
from django.urls import include, path


def empty(request):
    """Floor 1: Django with nothing to do (middleware, session and sign-in only)."""
    return HttpResponse(b"", content_type="text/plain")


class TenFields(forms.Form):
    """Ten text inputs: about the size of the plan form's options."""

    def __init__(self, *args, **kwargs):
        super().__init__(*args, **kwargs)
        for i in range(10):
            self.fields[f"field_{i}"] = forms.CharField(label=f"Field {i}", required=False, max_length=32)


def ten_field_form(request):
    """Floor 2: a template with a 10-field form (the form renderer and a CSRF token), as a fragment."""
    form = TenFields(request.POST or None, initial={f"field_{i}": f"{i}.5" for i in range(10)})
    if form.is_bound:
        form.is_valid()
    return render(request, "bench/form.html", {"form": form})


urlpatterns = [
    path("bench/empty/", empty, name="bench_empty"),
    path("bench/form/", ten_field_form, name="bench_form"),
    path("", include("atelier.urls")),
]
