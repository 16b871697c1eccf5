"""Printing a plan revision: included into fittings/urls.py, so the names live in the "fittings" namespace."""

from django.urls import path

from fittings import views_print

urlpatterns = [
    path("plans/<int:plan_id>/revisions/<int:number>/print/", views_print.print_start, name="print_start"),
    path("print/<int:job_id>/", views_print.print_status, name="print_status"),
    path("print/<int:job_id>/<slug:document>.pdf", views_print.print_download, name="print_download"),
]
