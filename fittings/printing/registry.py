"""The documents a print job draws, by slug: a label, a renderer and the template it fills.

A new printed document is a renderer ``(data, paper, pattern) -> bytes``, its
template in templates/fittings/print/ and one line in ``DOCUMENTS``.  The
job's files are kept one per document (fittings.models.PrintFile, keyed by
the slug), and the download link names the slug.
"""

from __future__ import annotations

import importlib
import logging
from dataclasses import dataclass

from fittings.printing import engine
from fittings.printing.data import DocumentData, altered_pattern

logger = logging.getLogger(__name__)


@dataclass(frozen=True)
class Document:
    """One printed document: its slug (in the job's files and the download address), label and renderer.

    The renderer is named by module and function, looked up when drawing, so
    the worker imports only what it draws (and a test may stand one in)."""

    slug: str
    label: str
    module: str
    function: str

    def render(self, data: DocumentData, paper: str, pattern=None) -> bytes:
        return getattr(importlib.import_module(self.module), self.function)(data, paper, pattern)


DOCUMENTS: dict[str, Document] = {
    d.slug: d
    for d in (
        Document("work-order", "Work order", "fittings.printing.work_order", "render_work_order"),
        Document("cutting-sheet", "Cutting sheet", "fittings.printing.cutting_sheet", "render_cutting_sheet"),
    )
}


def draw(data: DocumentData, paper: str, slugs) -> dict[str, bytes]:
    """The documents ``slugs`` of one print, by slug, all drawn from the same outlines.

    When more than one is wanted, every one after the first is drawn in a
    forked copy of this process while this one draws the first, so a
    two-core machine answers in the time of the longest document instead of
    the sum.  Forking is only safe in a process with a single thread (the
    task worker); elsewhere, and with ATELIER_PRINT_PROCESSES=1, they are
    drawn one after the other.
    """
    wanted = [DOCUMENTS[slug] for slug in slugs]
    pattern = altered_pattern(data)
    files: dict[str, bytes] = {}
    pending = {}
    here = wanted[:1]
    if len(wanted) > 1 and engine.may_fork():
        for doc in wanted[1:]:
            pending[doc.slug] = engine._in_forked_process(lambda doc=doc: doc.render(data, paper, pattern))
            logger.debug("Drawing the %s in a second process.", doc.label.lower())
    else:
        for doc in wanted[1:]:
            files[doc.slug] = doc.render(data, paper, pattern)
    try:
        for doc in here:
            files[doc.slug] = doc.render(data, paper, pattern)
    finally:
        for slug, wait in pending.items():
            files[slug] = wait()
    return {doc.slug: files[doc.slug] for doc in wanted}


def render_documents(
    data: DocumentData, paper: str, *, work_order: bool = True, cutting_sheet: bool = True
) -> dict[str, bytes]:
    """The work order and the cutting sheet of one print, by name (``work_order``, ``cutting_sheet``)."""
    slugs = [slug for slug, wanted in (("work-order", work_order), ("cutting-sheet", cutting_sheet)) if wanted]
    return {slug.replace("-", "_"): pdf for slug, pdf in draw(data, paper, slugs).items()}
