from django.urls import path

from patterns import views_block_files as views

app_name = "block_files"

urlpatterns = [
    path("import/", views.block_import, name="block_import"),
    path("<int:pk>/files/", views.pattern_files, name="pattern_files"),
    path("<int:pk>/pieces.svg", views.pattern_pieces, {"fmt": "svg"}, name="pattern_pieces_svg"),
    path("<int:pk>/pieces.dxf", views.pattern_pieces, {"fmt": "dxf"}, name="pattern_pieces_dxf"),
]
