"""The PDF engine: WeasyPrint imported once with fixed font dates, HTML to PDF, and the fork.

Pictures go into the HTML as data: addresses because WeasyPrint reads those
with an XML parser, far quicker than SVG written inline.  ``_in_forked_process``
draws one document in a forked copy of this process while this one draws
another (fittings.printing.registry decides when).
"""

from __future__ import annotations

import base64
import functools
import importlib
import logging
import os
import pickle
import threading
import warnings

from django.conf import settings

logger = logging.getLogger(__name__)


# The date written into the embedded font subsets.  Where Debian's HarfBuzz-Subset
# library is missing (a bare Debian 12), WeasyPrint subsets fonts with fontTools,
# which stamps each subset with the time of the print unless SOURCE_DATE_EPOCH
# (the reproducible-builds convention) says otherwise, so two prints of one
# revision a second apart would differ in their bytes.  A fixed date keeps a
# reprint the very same file on every machine.
FONT_SUBSET_DATE = "1704067200"  # 2024-01-01T00:00:00Z

# What WeasyPrint says about subsetting with fontTools instead of HarfBuzz-Subset:
# advice for whoever installs the machine (README, "System packages"), not for
# the fitter's console on every print.
_FONTTOOLS_NOTES = ("HarfBuzz-Subset will be required", "Using fontTools instead of HarfBuzz-Subset")


class _FontToolsNote(logging.Filter):
    def filter(self, record: logging.LogRecord) -> bool:
        if isinstance(record.msg, str) and record.msg.startswith(_FONTTOOLS_NOTES[1]):
            logger.debug("Fonts are subset with fontTools: libharfbuzz-subset0 is not installed.")
            return False
        return True


@functools.cache
def weasyprint():
    """WeasyPrint, imported once with fixed font dates and without its notes on the font library."""
    os.environ.setdefault("SOURCE_DATE_EPOCH", FONT_SUBSET_DATE)
    with warnings.catch_warnings():
        warnings.filterwarnings("ignore", message=_FONTTOOLS_NOTES[0], category=DeprecationWarning)
        module = importlib.import_module("weasyprint")
        importlib.import_module("weasyprint.text.fonts")  # loads the font libraries
    logging.getLogger("weasyprint").addFilter(_FontToolsNote())
    return module


@functools.cache
def font_config():
    """WeasyPrint's font configuration, built once per process (it reads the machine's fonts)."""
    return weasyprint().text.fonts.FontConfiguration()


@functools.cache
def url_fetcher():
    """Fetches data: addresses only, never the network or the file system; built once (it sets up TLS)."""
    return weasyprint().urls.URLFetcher(allowed_protocols=("data",))


def html_to_pdf(html: str) -> bytes:
    return weasyprint().HTML(string=html, url_fetcher=url_fetcher()).write_pdf(font_config=font_config())


def svg_data_uri(svg: str) -> str:
    """An SVG as a data: address; WeasyPrint reads it with an XML parser, far quicker than inline in HTML."""
    return "data:image/svg+xml;base64," + base64.b64encode(svg.encode("utf-8")).decode("ascii")


def png_data_uri(png: bytes) -> str:
    return "data:image/png;base64," + base64.b64encode(png).decode("ascii")


def may_fork() -> bool:
    """Whether a print may draw its cutting sheet in a forked copy of this process."""
    return settings.ATELIER_PRINT_PROCESSES > 1 and hasattr(os, "fork") and threading.active_count() == 1


def _in_forked_process(make):
    """Start ``make`` in a child process; returns a function that waits for its bytes (or raises)."""
    read_end, write_end = os.pipe()
    pid = os.fork()
    if pid == 0:  # the child: draw, send the bytes or the reason, and leave without any clean-up
        code = 0
        try:
            os.close(read_end)
            try:
                answer = pickle.dumps((True, make()))
            except BaseException as exc:  # noqa: BLE001  (reported to the parent in words)
                answer, code = pickle.dumps((False, f"{type(exc).__name__}: {exc}")), 1
            with os.fdopen(write_end, "wb") as pipe:
                pipe.write(answer)
        finally:
            os._exit(code)
    os.close(write_end)

    def wait() -> bytes:
        with os.fdopen(read_end, "rb") as pipe:
            answer = pipe.read()
        _, status = os.waitpid(pid, 0)
        if not answer:
            raise RuntimeError(f"The process drawing the cutting sheet stopped (status {status}).")
        ok, value = pickle.loads(answer)
        if not ok:
            raise RuntimeError(f"The cutting sheet could not be drawn ({value}).")
        return value

    return wait
