"""Fabric layouts of a revision: included into fittings/urls.py, so the names live in the "fittings" namespace."""

from django.urls import path

from fittings import views_layout

urlpatterns = [
    path("plans/<int:pk>/revisions/<int:number>/layout/", views_layout.fabric_layout, name="fabric_layout"),
    path(
        "plans/<int:pk>/revisions/<int:number>/layout/new/",
        views_layout.fabric_layout_start,
        name="fabric_layout_start",
    ),
]
