"""Slow imports and caches, done once before the server takes requests."""

import os

from django.conf import settings


def warm_up():
    """Import the drawing library and build its font cache.

    The cache is kept in the data folder unless MPLCONFIGDIR says otherwise,
    so it survives restarts and needs no writable home directory.
    """
    cache_dir = settings.DATA_DIR / "cache" / "matplotlib"
    cache_dir.mkdir(parents=True, exist_ok=True)
    os.environ.setdefault("MPLCONFIGDIR", str(cache_dir))
    import matplotlib

    matplotlib.use("Agg")
    import matplotlib.figure  # noqa: F401
    from matplotlib import font_manager

    font_manager.findfont("DejaVu Sans")
