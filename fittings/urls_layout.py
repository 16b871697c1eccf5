"""Fabric layouts of a revision: included into the revision's URLs in fittings/urls.py ("fittings" namespace)."""

from django.urls import path

from fittings import views_layout

urlpatterns = [
    path("layout/", views_layout.fabric_layout, name="fabric_layout"),
    path("layout/new/", views_layout.fabric_layout_start, name="fabric_layout_start"),
]
