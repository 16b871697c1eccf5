"""Printing a plan revision: included into fittings/urls.py, so the names live in the "fittings" namespace."""

from django.urls import include, path

from fittings import views_print, views_workroom

# The workroom's ways to get a revision out: a print job, or the projector (the views name the plan ``plan_id``).
revision_output_urls = [
    path("print/", views_print.print_start, name="print_start"),
    path("projector/", views_workroom.projector, name="projector"),
    path("projector/pieces.svg", views_workroom.projector_pieces, name="projector_pieces"),
]

job_urls = [
    path("", views_print.print_status, name="print_status"),
    path("<slug:document>.pdf", views_print.print_download, name="print_download"),
    path("large/<slug:fmt>.pdf", views_print.print_large, name="print_large"),
]

urlpatterns = [
    path("plans/<int:plan_id>/revisions/<int:number>/", include(revision_output_urls)),
    path("print/<int:job_id>/", include(job_urls)),
]
