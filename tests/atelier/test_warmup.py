import sys

from atelier.warmup import warm_up


def test_it_imports_the_drawing_library_and_keeps_its_cache_in_the_data_folder(settings):
    warm_up()
    assert "matplotlib.figure" in sys.modules
    assert (settings.DATA_DIR / "cache" / "matplotlib").is_dir()


def test_it_loads_what_the_first_requests_need_without_touching_the_database(settings):
    # No django_db mark: pytest-django refuses any query, and the workers forked
    # after the warm-up must not share a database connection.
    from django.template import engines

    from fittings.printing import engine

    warm_up()
    assert "fittings.views_plans" in sys.modules and "shapely" in sys.modules
    cached = engines["django"].engine.template_loaders[0].get_template_cache
    assert "fittings/_plan_table.html" in cached
    assert engine.font_config.cache_info().currsize == 1
