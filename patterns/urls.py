from django.urls import path

from patterns import views, views_block_files

app_name = "patterns"

urlpatterns = [
    path("", views.pattern_list, name="pattern_list"),
    path("new/", views.block_new, name="block_new"),
    path("new/draw/", views.block_draw, name="block_draw"),
    path("new/drawings/<str:key>.svg", views.block_drawing, name="block_drawing"),
    path("measure/", views.block_measure, name="block_measure"),
    path("<int:pk>/", views.pattern_detail, name="pattern_detail"),
    path("<int:pk>/drawing.svg", views.pattern_drawing, name="pattern_drawing"),
    path("<int:pk>/edit/", views.block_edit, name="block_edit"),
    path("<int:pk>/grade/", views.pattern_grade, name="pattern_grade"),
    # Blocks from drawings, and a block's pieces as drawings.
    path("import/", views_block_files.block_import, name="block_import"),
    path("<int:pk>/files/", views_block_files.pattern_files, name="pattern_files"),
    path("<int:pk>/pieces.svg", views_block_files.pattern_pieces, {"fmt": "svg"}, name="pattern_pieces_svg"),
    path("<int:pk>/pieces.dxf", views_block_files.pattern_pieces, {"fmt": "dxf"}, name="pattern_pieces_dxf"),
]
