from django.urls import include, path

from fittings import views, views_clients, views_pieces, views_plans

app_name = "fittings"

# A client's own pages, and what is added to a client (the views name the client ``client_pk``).
client_urls = [
    path("", views_clients.client_detail, name="client_detail"),
    path("edit/", views_clients.client_edit, name="client_edit"),
    path("delete/", views_clients.client_delete, name="client_delete"),
]
client_additions = [
    path("sessions/new/", views_clients.session_new, name="session_new"),
    path("sessions/check/", views_clients.session_check, name="session_check"),
    path("sessions/convert/", views_clients.session_convert, name="session_convert"),
    path("compare/", views_clients.compare, name="compare"),
    path("import/", views_plans.fitting_import, name="fitting_import"),
]

revision_urls = [
    path("", views_plans.revision_detail, name="revision_detail"),
    path("preview.svg", views_plans.revision_preview, name="revision_preview"),
    path("checks/", views_plans.revision_checks, name="revision_checks"),
    path("fitting.json", views_plans.revision_fitting_file, name="revision_fitting_file"),
    path("pieces.svg", views_pieces.revision_pieces, {"fmt": "svg"}, name="revision_pieces_svg"),
    path("pieces.dxf", views_pieces.revision_pieces, {"fmt": "dxf"}, name="revision_pieces_dxf"),
    path("issue/", views_plans.revision_issue, name="revision_issue"),
    path("proof/<slug:document>.pdf", views_plans.revision_proof, name="revision_proof"),
    path("pins/", views_plans.revision_pins, name="revision_pins"),
    path("pins/apply/", views_plans.revision_apply_pins, name="revision_apply_pins"),
    path("", include("fittings.urls_layout")),
]

plan_urls = [
    path("", views_plans.plan_edit, name="plan_edit"),
    path("recompute/", views_plans.plan_recompute, name="plan_recompute"),
    path("preview.svg", views_plans.plan_preview, name="plan_preview"),
    path("checks/", views_plans.plan_checks, name="plan_checks"),
    path("revisions/<int:number>/", include(revision_urls)),
]

photo_urls = [
    path("", views.photo_file, name="photo_file"),
    path("delete/", views.photo_delete, name="photo_delete"),
    path("replace/", views.photo_replace, name="photo_replace"),
]

urlpatterns = [
    path("", views.client_list, name="client_list"),
    path("workroom/", views.workroom_queue, name="workroom_queue"),
    path("clients/new/", views_clients.client_new, name="client_new"),
    path("clients/<int:pk>/", include(client_urls)),
    path("clients/<int:client_pk>/", include(client_additions)),
    path("sessions/<int:pk>/", views_clients.session_edit, name="session_edit"),
    path("sessions/<int:session_pk>/plans/new/", views_plans.plan_new, name="plan_new"),
    path("plans/<int:pk>/", include(plan_urls)),
    path("photos/<int:pk>/", include(photo_urls)),
    path("", include("fittings.urls_print")),
]
