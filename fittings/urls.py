from django.urls import include, path

from fittings import views, views_clients, views_pieces, views_plans

app_name = "fittings"

urlpatterns = [
    path("", views.client_list, name="client_list"),
    path("workroom/", views.workroom_queue, name="workroom_queue"),
    path("clients/new/", views_clients.client_new, name="client_new"),
    path("clients/<int:pk>/", views_clients.client_detail, name="client_detail"),
    path("clients/<int:pk>/edit/", views_clients.client_edit, name="client_edit"),
    path("clients/<int:pk>/delete/", views_clients.client_delete, name="client_delete"),
    path("clients/<int:client_pk>/sessions/new/", views_clients.session_new, name="session_new"),
    path("clients/<int:client_pk>/sessions/check/", views_clients.session_check, name="session_check"),
    path("clients/<int:client_pk>/sessions/convert/", views_clients.session_convert, name="session_convert"),
    path("clients/<int:client_pk>/compare/", views_clients.compare, name="compare"),
    path("clients/<int:client_pk>/import/", views_plans.fitting_import, name="fitting_import"),
    path("sessions/<int:pk>/", views_clients.session_edit, name="session_edit"),
    path("sessions/<int:session_pk>/plans/new/", views_plans.plan_new, name="plan_new"),
    path("plans/<int:pk>/", views_plans.plan_edit, name="plan_edit"),
    path("plans/<int:pk>/recompute/", views_plans.plan_recompute, name="plan_recompute"),
    path("plans/<int:pk>/preview.svg", views_plans.plan_preview, name="plan_preview"),
    path("plans/<int:pk>/checks/", views_plans.plan_checks, name="plan_checks"),
    path("plans/<int:pk>/revisions/<int:number>/", views_plans.revision_detail, name="revision_detail"),
    path("plans/<int:pk>/revisions/<int:number>/preview.svg", views_plans.revision_preview, name="revision_preview"),
    path("plans/<int:pk>/revisions/<int:number>/checks/", views_plans.revision_checks, name="revision_checks"),
    path(
        "plans/<int:pk>/revisions/<int:number>/fitting.json",
        views_plans.revision_fitting_file,
        name="revision_fitting_file",
    ),
    path(
        "plans/<int:pk>/revisions/<int:number>/pieces.svg",
        views_pieces.revision_pieces,
        {"fmt": "svg"},
        name="revision_pieces_svg",
    ),
    path(
        "plans/<int:pk>/revisions/<int:number>/pieces.dxf",
        views_pieces.revision_pieces,
        {"fmt": "dxf"},
        name="revision_pieces_dxf",
    ),
    path("plans/<int:pk>/revisions/<int:number>/issue/", views_plans.revision_issue, name="revision_issue"),
    path(
        "plans/<int:pk>/revisions/<int:number>/proof/<slug:document>.pdf",
        views_plans.revision_proof,
        name="revision_proof",
    ),
    path("plans/<int:pk>/revisions/<int:number>/pins/", views_plans.revision_pins, name="revision_pins"),
    path(
        "plans/<int:pk>/revisions/<int:number>/pins/apply/", views_plans.revision_apply_pins, name="revision_apply_pins"
    ),
    path("photos/<int:pk>/", views.photo_file, name="photo_file"),
    path("photos/<int:pk>/delete/", views.photo_delete, name="photo_delete"),
    path("photos/<int:pk>/replace/", views.photo_replace, name="photo_replace"),
    path("", include("fittings.urls_print")),
    path("", include("fittings.urls_layout")),
]
