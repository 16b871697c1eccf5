import sys

from atelier.warmup import warm_up


def test_it_imports_the_drawing_library_and_keeps_its_cache_in_the_data_folder(settings):
    warm_up()
    assert "matplotlib.figure" in sys.modules
    assert (settings.DATA_DIR / "cache" / "matplotlib").is_dir()
