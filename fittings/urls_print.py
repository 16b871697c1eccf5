"""Printing a plan revision: included into fittings/urls.py, so the names live in the "fittings" namespace."""

from django.urls import path

from fittings import views_print, views_workroom

urlpatterns = [
    path("plans/<int:plan_id>/revisions/<int:number>/print/", views_print.print_start, name="print_start"),
    path("print/<int:job_id>/", views_print.print_status, name="print_status"),
    path("print/<int:job_id>/<slug:document>.pdf", views_print.print_download, name="print_download"),
    path("print/<int:job_id>/large/<slug:fmt>.pdf", views_print.print_large, name="print_large"),
    path("plans/<int:plan_id>/revisions/<int:number>/projector/", views_workroom.projector, name="projector"),
    path(
        "plans/<int:plan_id>/revisions/<int:number>/projector/pieces.svg",
        views_workroom.projector_pieces,
        name="projector_pieces",
    ),
]
