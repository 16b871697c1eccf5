"""Slow imports and caches, done once before the server takes requests.

``manage.py start`` serves with gunicorn's --preload: this runs in the
master process, and every worker is forked with its results in memory, so
the first fitter after a restart does not wait for imports, template
compilation, font look-ups or the drawing library's first figure.
"""

import gc
import os
from pathlib import Path

from django.conf import settings


def warm_up():
    """Build the drawing library's font cache, then load everything the first requests would.

    The font cache is kept in the data folder unless MPLCONFIGDIR says
    otherwise, so it survives restarts and needs no writable home directory.
    Nothing here opens a database connection: connections must not be
    shared with the forked workers.
    """
    cache_dir = settings.DATA_DIR / "cache" / "matplotlib"
    cache_dir.mkdir(parents=True, exist_ok=True)
    os.environ.setdefault("MPLCONFIGDIR", str(cache_dir))
    import matplotlib

    matplotlib.use("Agg")
    import matplotlib.figure  # noqa: F401
    from matplotlib import font_manager

    font_manager.findfont("DejaVu Sans")
    _import_views()
    _compile_templates()
    _draw_a_preview()
    _printing()
    # What is loaded now lives as long as the process: keep it out of the garbage collector's
    # sweeps, which otherwise walk all of it (about 60 ms here, in the middle of some request)
    # and write to the pages the forked workers share.  Python's documentation of gc.freeze()
    # recommends this before a server forks its workers.
    gc.collect()
    gc.freeze()


def _import_views():
    """Every view module (through the URLconf) and the reverse lookup table."""
    from django.urls import get_resolver, reverse

    get_resolver().url_patterns  # noqa: B018 - importing is the point
    reverse("fittings:client_list")


def _compile_templates():
    """Compile the project's templates and the form renderer's, which the cached loader then keeps."""
    from django import forms
    from django.template import TemplateDoesNotExist, TemplateSyntaxError, engines

    engine = engines["django"]
    for folder in map(Path, engine.engine.dirs):
        for path in sorted(folder.rglob("*.html")):
            try:
                engine.get_template(path.relative_to(folder).as_posix())
            except (TemplateDoesNotExist, TemplateSyntaxError):
                pass

    class Probe(forms.Form):
        text = forms.CharField()
        choice = forms.ChoiceField(choices=[("a", "a")])

    str(Probe())


def _draw_a_preview():
    """The allotment engine, the outline geometry and one preview, for the demo corset (no database)."""
    from patterns import demo
    from patterns.core.allot import PlanOptions, allot
    from patterns.core.fitting import body_from_measurements
    from patterns.core.outline import alter_pattern
    from patterns.core.preview import preview_svg

    block = demo.corset_block("10")
    values = {code: float(mm) for code, mm in demo.DEMO_CLIENTS[0]["sessions"][0]["values"].items()}
    result = allot(block, body_from_measurements(values), PlanOptions(ease={"waist": -50.0}))
    alteration = result.alteration(block)
    preview_svg(block, alteration, pattern=alter_pattern(block, alteration))


def _printing():
    """WeasyPrint's font configuration (built once per process) and its first, slowest document."""
    from fittings.printing import engine

    engine.font_config()
    engine.html_to_pdf("<!doctype html><title>warm-up</title><p>One line.</p>")
