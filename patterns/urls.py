from django.urls import include, path

from patterns import views, views_block_files

app_name = "patterns"

# A block being typed in, before it is stored.
new_block = [
    path("", views.block_new, name="block_new"),
    path("draw/", views.block_draw, name="block_draw"),
    path("drawings/<str:key>.svg", views.block_drawing, name="block_drawing"),
]

# One stored block: its page, drawing, editing, grading, and its pieces as drawings.
one_pattern = [
    path("", views.pattern_detail, name="pattern_detail"),
    path("drawing.svg", views.pattern_drawing, name="pattern_drawing"),
    path("edit/", views.block_edit, name="block_edit"),
    path("grade/", views.pattern_grade, name="pattern_grade"),
    path("files/", views_block_files.pattern_files, name="pattern_files"),
    path("pieces.svg", views_block_files.pattern_pieces, {"fmt": "svg"}, name="pattern_pieces_svg"),
    path("pieces.dxf", views_block_files.pattern_pieces, {"fmt": "dxf"}, name="pattern_pieces_dxf"),
]

urlpatterns = [
    path("", views.pattern_list, name="pattern_list"),
    path("measure/", views.block_measure, name="block_measure"),
    path("import/", views_block_files.block_import, name="block_import"),
    path("new/", include(new_block)),
    path("<int:pk>/", include(one_pattern)),
]
