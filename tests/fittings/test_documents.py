"""The printed work order and the 1:1 cutting sheet, read back from the PDF.

Outside references used here:
- 1 pt = 1/72 in: ISO 32000-1 (PDF 1.7), 8.3.2.3 (PDF user space unit).
- 1 in = 25.4 mm exactly: international yard and pound agreement (1959).
- A4 = 210 x 297 mm: ISO 216.  US Letter = 8.5 x 11 in = 215.9 x 279.4 mm: ANSI/ASME Y14.1.
- A 10 cm and a 4 in test square, "print at 100 %": common practice for printed patterns.
"""

import io
import logging
import math
import os
import re
import signal
from datetime import timedelta
from pathlib import Path

import pdfplumber
import pypdf
import pytest
from django.core.management import CommandError, call_command
from django.urls import include, path, reverse
from django.utils import timezone

import atelier.urls
import fittings.urls
import fittings.urls_print
from fittings import selectors
from fittings.models import MeasurementSession, PrintJob, RevisionStatus
from fittings.printing import cutting_sheet as cutting_sheet_doc
from fittings.printing import engine, registry
from fittings.printing import work_order as work_order_doc
from fittings.printing.cutting_sheet import render_cutting_sheet
from fittings.printing.data import WAIST_REDUCTION_CAUTION, DocumentData, altered_pattern, client_label, document_data
from fittings.printing.work_order import render_work_order, work_order_pdf
from fittings.services import plans as plan_services
from fittings.services import printing
from fittings.services.printing import run_print_job
from fittings.wording import in_unit
from patterns.core import sheets
from patterns.core.measures import LEVEL_LABELS
from patterns.core.sheets import PANEL_GAP_MM, SHEET_MARGIN_MM
from patterns.core.tiling import OVERLAP_MM, PAGE_MARGIN_MM
from patterns.core.units import format_length
from tests.fittings.print_data import BASE_URL, MM_PER_PT, example_data

A4_MM = (210.0, 297.0)  # ISO 216
LETTER_MM = (8.5 * 25.4, 11 * 25.4)  # ANSI/ASME Y14.1
PAPER_MM = {"a4": A4_MM, "letter": LETTER_MM}

# The print views, wherever the lead includes them: this module is also the URL conf of its view tests.
urlpatterns = [p for p in atelier.urls.urlpatterns if getattr(p, "app_name", None) != "fittings"] + [
    path("", include((list(fittings.urls.urlpatterns) + list(fittings.urls_print.urlpatterns), "fittings"))),
]


# --- plain data, no database ------------------------------------------------------------------


@pytest.fixture(scope="module")
def pdfs(strong, gentle, bodice):
    """Each document rendered once for the module (WeasyPrint takes a while)."""
    cache = {}

    def get(kind, name, paper):
        key = (kind, name, paper)
        if key not in cache:
            data = {"strong": strong, "gentle": gentle, "bodice": bodice}[name]
            render = render_work_order if kind == "work_order" else render_cutting_sheet
            cache[key] = render(data, paper)
        return cache[key]

    return get


def pages_mm(pdf: bytes) -> list[tuple[float, float]]:
    reader = pypdf.PdfReader(io.BytesIO(pdf))
    return [(float(p.mediabox.width) * MM_PER_PT, float(p.mediabox.height) * MM_PER_PT) for p in reader.pages]


def text_of(pdf: bytes) -> str:
    with pdfplumber.open(io.BytesIO(pdf)) as doc:
        return "\n".join(page.extract_text() or "" for page in doc.pages)


def flat(text: str) -> str:
    return re.sub(r"\s+", " ", text)


@pytest.mark.parametrize("paper", ["a4", "letter"])
@pytest.mark.parametrize("kind", ["work_order", "cutting_sheet"])
def test_it_prints_on_the_paper_asked_for(pdfs, kind, paper):
    sizes = pages_mm(pdfs(kind, "strong", paper))
    assert len(sizes) >= 2
    width, height = PAPER_MM[paper]
    for w, h in sizes:
        # Tiles may lie in landscape: compare the short and the long side.
        assert min(w, h) == pytest.approx(width, abs=0.1)
        assert max(w, h) == pytest.approx(height, abs=0.1)


@pytest.mark.parametrize("paper", ["a4", "letter"])
def test_it_draws_the_test_squares_at_true_size(pdfs, paper):
    with pdfplumber.open(io.BytesIO(pdfs("cutting_sheet", "strong", paper))) as doc:
        cover = doc.pages[0]
        squares = [
            (r["width"] * MM_PER_PT, r["height"] * MM_PER_PT)
            for r in cover.rects
            if abs(r["width"] - r["height"]) * MM_PER_PT < 0.2 and r["width"] * MM_PER_PT > 90
        ]
        text = flat(cover.extract_text())
    # 10 cm, and 4 in = 101.6 mm (1959 agreement); to 0.2 mm.
    assert sorted(round(w, 1) for w, _ in squares) == [100.0, 101.6]
    for w, h in squares:
        assert min(abs(w - 100.0), abs(w - 101.6)) < 0.2 and min(abs(h - 100.0), abs(h - 101.6)) < 0.2
    assert "10 cm test square" in text and "4 in test square" in text
    assert "Print at 100 % (actual size)" in text


def expected_grid(data: DocumentData, paper: str) -> tuple[str, int, int]:
    """Orientation, rows and columns worked out here from the panel extents and the paper, not by the app."""
    pattern = altered_pattern(data)
    boxes = [([x for x, _ in o.cutting], [y for _, y in o.cutting]) for o in pattern.altered]
    sheet_w = sum(max(xs) - min(xs) for xs, _ in boxes) + PANEL_GAP_MM * (len(boxes) - 1) + 2 * SHEET_MARGIN_MM
    sheet_h = (max(max(ys) for _, ys in boxes) - min(min(ys) for _, ys in boxes)) + 2 * SHEET_MARGIN_MM

    def count(extent, printable):
        return 1 if extent <= printable else 1 + math.ceil((extent - printable) / (printable - OVERLAP_MM))

    short, long = PAPER_MM[paper]
    options = []
    for orientation, page_w, page_h in (("portrait", short, long), ("landscape", long, short)):
        cols = count(sheet_w, page_w - 2 * PAGE_MARGIN_MM)
        rows = count(sheet_h, page_h - 2 * PAGE_MARGIN_MM)
        options.append((rows * cols, orientation, rows, cols))
    best = min(options, key=lambda o: o[0])  # portrait first, so it wins a tie
    return best[1], best[2], best[3]


@pytest.mark.parametrize(("name", "paper"), [("strong", "a4"), ("strong", "letter"), ("bodice", "letter")])
def test_it_tiles_as_many_pages_as_the_panels_need(pdfs, strong, bodice, name, paper):
    data = {"strong": strong, "bodice": bodice}[name]
    orientation, rows, cols = expected_grid(data, paper)
    pdf = pdfs("cutting_sheet", name, paper)
    sizes = pages_mm(pdf)
    assert len(sizes) - 1 == rows * cols  # the first page is the cover
    for w, h in sizes[1:]:
        assert (w > h) == (orientation == "landscape")
    with pdfplumber.open(io.BytesIO(pdf)) as doc:
        labels = [re.search(r"\b([A-Z]+[0-9]+)\b", page.extract_text()).group(1) for page in doc.pages[1:]]
    assert labels == [f"{'ABCDEFGHIJKLMNOPQRSTUVWXYZ'[r]}{c + 1}" for r in range(rows) for c in range(cols)]


def _is_black(colour) -> bool:
    return colour is not None and len(colour) == 3 and all(abs(c) < 1e-6 for c in colour)


@pytest.mark.parametrize(("name", "paper"), [("strong", "a4"), ("strong", "letter"), ("bodice", "letter")])
def test_it_draws_every_panel_at_true_size_across_the_tiles(pdfs, strong, bodice, name, paper):
    data = {"strong": strong, "bodice": bodice}[name]
    _, rows, cols = expected_grid(data, paper)
    pattern = altered_pattern(data)
    cut_width_pt = sheets.CUT_WIDTH_MM / MM_PER_PT
    groups: dict[tuple, list] = {}
    with pdfplumber.open(io.BytesIO(pdfs("cutting_sheet", name, paper))) as doc:
        for index, page in enumerate(doc.pages[1:]):
            row, col = divmod(index, cols)
            # The printable area: the page less its margins, from the page's own size.
            fx = fy = PAGE_MARGIN_MM
            fw, fh = page.width * MM_PER_PT - 2 * PAGE_MARGIN_MM, page.height * MM_PER_PT - 2 * PAGE_MARGIN_MM
            frame = max(page.rects, key=lambda r: r["width"] * r["height"] if r["stroke"] and not r["fill"] else 0)
            assert [v * MM_PER_PT for v in (frame["x0"], frame["top"], frame["width"], frame["height"])] == (
                pytest.approx([fx, fy, fw, fh], abs=0.1)
            )
            # Each tile starts one printable width less the overlap after the one before it.
            ox, oy = col * (fw - OVERLAP_MM), row * (fh - OVERLAP_MM)
            for curve in page.curves:
                if not (
                    _is_black(curve["stroking_color"])
                    and abs(curve["linewidth"] - cut_width_pt) < 0.01
                    and len(curve["pts"]) > 8
                ):
                    continue
                pts = [(x * MM_PER_PT, y * MM_PER_PT) for x, y in curve["pts"]]
                whole = tuple(
                    round(v * 2) / 2
                    for v in (
                        min(x for x, _ in pts) - fx + ox,
                        min(y for _, y in pts) - fy + oy,
                        max(x for x, _ in pts) - fx + ox,
                        max(y for _, y in pts) - fy + oy,
                    )
                )
                seen = [
                    (x - fx + ox, y - fy + oy)
                    for x, y in pts
                    if fx - 0.01 <= x <= fx + fw + 0.01 and fy - 0.01 <= y <= fy + fh + 0.01
                ]
                # The same panel lands on the same place of the sheet from every tile.
                groups.setdefault(whole, []).extend(seen)
    assert len(groups) == len(pattern.altered)
    drawn = sorted(groups.items())
    for (whole, seen), outline in zip(drawn, pattern.altered):
        xs, ys = [x for x, _ in outline.cutting], [y for _, y in outline.cutting]
        width, height = max(xs) - min(xs), max(ys) - min(ys)
        assert max(x for x, _ in seen) - min(x for x, _ in seen) == pytest.approx(width, abs=0.5)
        assert max(y for _, y in seen) - min(y for _, y in seen) == pytest.approx(height, abs=0.5)


@pytest.mark.parametrize("name", ["strong", "gentle", "bodice"])
@pytest.mark.parametrize("paper", ["a4", "letter"])
def test_it_keeps_each_panel_label_within_one_row_of_tiles(strong, gentle, bodice, name, paper):
    data = {"strong": strong, "gentle": gentle, "bodice": bodice}[name]
    sheet, grid = sheets.sheet_grid(altered_pattern(data), paper)
    rows_of: dict[str, set[int]] = {}
    for tile in grid.tiles():
        for label in sheets.piece_labels(sheet, grid, tile):
            if label.bold:
                rows_of.setdefault(label.text, set()).add(tile.row)
    assert sorted(rows_of) == sorted(o.name for o in altered_pattern(data).altered)
    assert all(len(rows) == 1 for rows in rows_of.values())


def expected_cell(edge, unit: str) -> str:
    if edge is None:
        return "–"
    amount = format_length(abs(edge.shift_mm), unit)
    if amount in ("0", "0.0"):
        return "no change"
    return ("let out " if edge.shift_mm > 0 else "take in ") + amount


def table_rows(pdf: bytes) -> list[list[str]]:
    rows = []
    with pdfplumber.open(io.BytesIO(pdf)) as doc:
        for page in doc.pages:
            # Only the drawn cell borders, not the edges of the shaded header cells.
            strict = {"vertical_strategy": "lines_strict", "horizontal_strategy": "lines_strict"}
            for table in page.extract_tables(strict):
                rows += [[flat(cell or "").strip() for cell in row] for row in table]
    return rows


@pytest.mark.parametrize("name", ["strong", "gentle", "bodice"])
def test_it_lists_every_seam_shift_at_every_level_in_words(pdfs, strong, gentle, bodice, name):
    data = {"strong": strong, "gentle": gentle, "bodice": bodice}[name]
    unit = data.result.unit
    rows = table_rows(pdfs("work_order", name, "a4"))
    by_edge = {(s.seam, s.level, s.panel): s for s in data.result.shifts}
    checked = 0
    for seam in data.block.seams:
        for panel in (seam.front_panel, seam.back_panel):
            row = next(r for r in rows if r[:2] == [seam.name, panel])
            cells = [cell.split(" set by hand")[0].split(" with pins")[0] for cell in row[2:]]
            assert cells == [
                expected_cell(by_edge.get((seam.name, level, panel)), unit) for level in data.block.level_names
            ]
            checked += 1
    assert checked == 2 * len(data.block.seams)
    text = text_of(pdfs("work_order", name, "a4"))
    moved = [s.shift_mm for s in data.result.shifts if format_length(abs(s.shift_mm), unit) not in ("0", "0.0")]
    if any(v < 0 for v in moved):
        assert "take in" in text
    if any(v > 0 for v in moved):
        assert "let out" in text


def test_it_lists_the_girths_per_level(pdfs, strong):
    rows = table_rows(pdfs("work_order", "strong", "a4"))
    for level in strong.result.levels:
        row = next(r for r in rows if r and r[0] == LEVEL_LABELS[level.level])
        assert row[1] == format_length(level.body, "in")
        assert row[4] == format_length(level.target, "in")
        assert row[6] == format_length(level.difference, "in", signed=True)


def test_it_names_the_revision_and_how_to_open_it(pdfs):
    text = flat(text_of(pdfs("work_order", "strong", "a4")))
    assert "Work order" in text and "revision 3" in text and "(based on revision 2)" in text
    assert "WF-0102" in text and "Overbust corset, six panels, size 12" in text
    assert "4 March 2025" in text and "Demo Fitter" in text
    with pdfplumber.open(io.BytesIO(pdfs("work_order", "strong", "a4"))) as doc:
        page = doc.pages[0]
        # The QR code's column, top right: the address printed under the code.
        corner = page.crop((page.width - 50 / MM_PER_PT, 0, page.width, page.height / 3)).extract_text()
    assert f"{BASE_URL}/plans/7/revisions/3/" in re.sub(r"\s+", "", corner)
    sheet = flat(text_of(pdfs("cutting_sheet", "strong", "a4")))
    assert "Cutting sheet: Daily corset, revision 3" in sheet


def test_it_shows_the_breathing_caution_for_a_strong_reduction(pdfs, strong):
    finding = next(f for f in strong.result.findings if f.code == "strong_waist_reduction")
    with pdfplumber.open(io.BytesIO(pdfs("cutting_sheet", "strong", "a4"))) as doc:
        cover = doc.pages[0]
        # The notes column, right of the test squares.
        notes = cover.crop((118 / MM_PER_PT, 0, cover.width, cover.height)).extract_text()
    for text in (flat(text_of(pdfs("work_order", "strong", "a4"))), flat(notes)):
        assert flat(WAIST_REDUCTION_CAUTION) in text
        assert "restricts breathing" in text
        assert flat(in_unit(finding.message, strong.unit)) in text  # in the plan's unit (inches here)


def test_it_shows_the_waist_caution_for_any_reduction_and_not_without_one(pdfs, gentle):
    assert not any(f.code == "strong_waist_reduction" for f in gentle.result.findings)
    assert flat(WAIST_REDUCTION_CAUTION) in flat(text_of(pdfs("work_order", "gentle", "a4")))
    assert "restricts breathing" not in text_of(pdfs("work_order", "bodice", "a4"))


def test_it_carries_the_toile_pins(pdfs, strong):
    rows = table_rows(pdfs("work_order", "strong", "a4"))
    pin = strong.options.pins[0]
    row = next(r for r in rows if r[:2] == [pin.seam, LEVEL_LABELS[pin.level]])
    word = "let out" if pin.amount_mm > 0 else "take in"
    assert row[2] == f"{word} {format_length(abs(pin.amount_mm), 'in')} in"


def test_it_lists_the_layers_to_cut(pdfs, strong, bodice):
    corset = table_rows(pdfs("work_order", "strong", "a4"))
    assert ["Panel", "Outer fabric", "Strength layer", "Lining"] in corset
    assert ["Centre front", "2 (a mirrored pair)", "2 (a mirrored pair)", "2 (a mirrored pair)"] in corset
    dress = table_rows(pdfs("work_order", "bodice", "a4"))
    assert ["Panel", "Outer fabric", "Lining"] in dress
    assert ["Centre front", "1 on the fold", "1 on the fold"] in dress


def test_it_has_sign_off_lines_and_page_numbers(pdfs):
    pdf = pdfs("work_order", "strong", "letter")
    text = text_of(pdf)
    assert "Cut by" in text and "Checked by the fitter" in text
    pages = len(pages_mm(pdf))
    for n in range(1, pages + 1):
        assert f"Page {n} of {pages}" in text


def test_it_embeds_its_fonts(pdfs):
    for kind in ("work_order", "cutting_sheet"):
        reader = pypdf.PdfReader(io.BytesIO(pdfs(kind, "strong", "a4")))
        fonts = {}
        for page in reader.pages:
            for font in page["/Resources"].get("/Font", {}).values():
                font = font.get_object()
                descendant = font["/DescendantFonts"][0].get_object() if "/DescendantFonts" in font else font
                fonts[str(font["/BaseFont"])] = descendant["/FontDescriptor"].get_object()
        assert fonts and all("DejaVu" in name for name in fonts)
        assert all(any(k in d for k in ("/FontFile", "/FontFile2", "/FontFile3")) for d in fonts.values())


def _geometry(pdf: bytes):
    with pdfplumber.open(io.BytesIO(pdf)) as doc:
        return [
            (
                page.extract_text(),
                [tuple(round(r[k], 3) for k in ("x0", "top", "width", "height")) for r in page.rects],
                [tuple((round(x, 3), round(y, 3)) for x, y in c["pts"]) for c in page.curves],
                [tuple((round(x, 3), round(y, 3)) for x, y in line["pts"]) for line in page.lines],
            )
            for page in doc.pages
        ]


def test_it_renders_the_same_pages_every_time(pdfs, strong):
    for kind, render in (("work_order", render_work_order), ("cutting_sheet", render_cutting_sheet)):
        first, again = pdfs(kind, "strong", "a4"), render(strong, "a4")
        assert _geometry(first) == _geometry(again)
        assert first == again  # and, with this WeasyPrint, the very same bytes


@pytest.fixture
def forks(monkeypatch):
    """Counts the child processes a print starts, in a process taken for the one-thread task worker
    (the test run may have a live server's thread waiting on its socket)."""
    started = []
    real = engine._in_forked_process

    def counting(make):
        started.append(make)
        return real(make)

    monkeypatch.setattr(engine, "_in_forked_process", counting)
    monkeypatch.setattr(engine.threading, "active_count", lambda: 1)
    return started


FORK_WITH_IDLE_THREADS = pytest.mark.filterwarnings("ignore:This process .* is multi-threaded:DeprecationWarning")


@FORK_WITH_IDLE_THREADS
def test_it_draws_the_cutting_sheet_in_a_second_process_with_the_same_bytes(pdfs, strong, forks, settings):
    settings.ATELIER_PRINT_PROCESSES = 2
    files = registry.render_documents(strong, "a4")
    assert len(forks) == 1
    assert files == {
        "work_order": pdfs("work_order", "strong", "a4"),
        "cutting_sheet": pdfs("cutting_sheet", "strong", "a4"),
    }


def test_it_draws_one_after_the_other_when_told_or_when_threads_run(strong, forks, settings, monkeypatch):
    monkeypatch.setattr(work_order_doc, "render_work_order", lambda data, paper, pattern=None: b"WO")
    monkeypatch.setattr(cutting_sheet_doc, "render_cutting_sheet", lambda data, paper, pattern=None: b"CS")
    settings.ATELIER_PRINT_PROCESSES = 1
    assert registry.render_documents(strong, "a4") == {"work_order": b"WO", "cutting_sheet": b"CS"}
    settings.ATELIER_PRINT_PROCESSES = 2
    monkeypatch.setattr(engine.threading, "active_count", lambda: 3)  # as in a threaded web server
    assert registry.render_documents(strong, "a4") == {"work_order": b"WO", "cutting_sheet": b"CS"}
    assert registry.render_documents(strong, "a4", work_order=False) == {"cutting_sheet": b"CS"}
    assert forks == []


@FORK_WITH_IDLE_THREADS
def test_it_reports_a_failed_or_vanished_second_process_in_words(strong, forks, settings, monkeypatch):
    settings.ATELIER_PRINT_PROCESSES = 2
    monkeypatch.setattr(work_order_doc, "render_work_order", lambda data, paper, pattern=None: b"WO")

    def broken(data, paper, pattern=None):
        raise ValueError("no paper left")

    monkeypatch.setattr(cutting_sheet_doc, "render_cutting_sheet", broken)
    with pytest.raises(RuntimeError, match=r"could not be drawn \(ValueError: no paper left\)"):
        registry.render_documents(strong, "a4")

    def killed(data, paper, pattern=None):
        os.kill(os.getpid(), signal.SIGKILL)

    monkeypatch.setattr(cutting_sheet_doc, "render_cutting_sheet", killed)
    with pytest.raises(RuntimeError, match="stopped"):
        registry.render_documents(strong, "a4")
    assert len(forks) == 2


def test_it_marks_a_draft_as_not_for_cutting():
    text = flat(text_of(render_work_order(example_data("hester-quayle-first-corset", status="draft"), "a4")))
    assert "Do not cut from this copy" in text


# --- the app: revisions, print jobs, views ---------------------------------------------------

PDF_STUB = b"%PDF-1.7\n% test stand-in\n"


@pytest.fixture
def quick_render(monkeypatch):
    """Stand-ins for WeasyPrint where a test is about the job, not the pages."""
    monkeypatch.setattr(
        "fittings.printing.work_order.render_work_order", lambda data, paper, pattern=None: PDF_STUB + b"WO"
    )
    monkeypatch.setattr(
        "fittings.printing.cutting_sheet.render_cutting_sheet", lambda data, paper, pattern=None: PDF_STUB + b"CS"
    )


def start_url(revision):
    return reverse("fittings:print_start", args=[revision.plan_id, revision.number])


@pytest.mark.django_db
@pytest.mark.urls(__name__)
def test_it_issues_a_draft_prints_it_and_serves_the_files(fitter_client, plan):
    revision = selectors.latest_revision(plan)
    assert revision.status == RevisionStatus.DRAFT
    response = fitter_client.post(start_url(revision), {"paper": "letter", "kind": "both"})
    job = PrintJob.objects.get()
    assert response.status_code == 302 and response["Location"] == reverse("fittings:print_status", args=[job.pk])
    revision.refresh_from_db()
    assert revision.status == RevisionStatus.ISSUED and revision.issued_by is not None
    assert (job.status, job.paper, job.kind, job.error) == ("done", "letter", "both", "")
    page = fitter_client.get(response["Location"])
    assert page.status_code == 200 and "Download the work order" in page.content.decode()
    download = fitter_client.get(reverse("fittings:print_download", args=[job.pk, "work-order"]))
    assert download.status_code == 200 and download["Content-Type"] == "application/pdf"
    assert download["Content-Disposition"].startswith("attachment;")
    assert f"r{revision.number}-letter.pdf" in download["Content-Disposition"]
    served = b"".join(download.streaming_content)
    text = flat(text_of(served))
    assert f"revision {revision.number}" in text and "issued" in text and "WF-0102" in text
    assert "Odalys" not in text  # the client's name stays off paper unless the atelier allows it
    # Printing again renders from the stored revision: the same document.
    assert work_order_pdf(revision, "letter", "http://testserver/") == served
    sheet = fitter_client.get(reverse("fittings:print_download", args=[job.pk, "cutting-sheet"]))
    assert sheet.status_code == 200 and b"".join(sheet.streaming_content).startswith(b"%PDF")


@pytest.mark.django_db
@pytest.mark.urls(__name__)
def test_it_shows_progress_as_an_htmx_fragment_that_polls_until_done(fitter_client, plan, quick_render):
    revision = plan_services.issue_revision(revision=selectors.latest_revision(plan), user=None)
    waiting = PrintJob.objects.create(revision=revision, paper="a4")
    url = reverse("fittings:print_status", args=[waiting.pk])
    full = fitter_client.get(url)
    assert full.status_code == 200 and "<html" in full.content.decode()
    fragment = fitter_client.get(url, headers={"HX-Request": "true"})
    html = fragment.content.decode()
    assert fragment.status_code == 200 and "<html" not in html
    assert html.lstrip().startswith('<div id="print-status"') and 'hx-trigger="every 1s"' in html
    assert "Waiting to start" in html
    assert run_print_job(waiting.pk) == "done"
    done = fitter_client.get(url, headers={"HX-Request": "true"}).content.decode()
    assert "hx-trigger" not in done and "Download the cutting sheet" in done


@pytest.mark.django_db
@pytest.mark.urls(__name__)
def test_it_gives_up_on_a_job_its_worker_left_and_offers_to_print_again(fitter_client, plan):
    revision = plan_services.issue_revision(revision=selectors.latest_revision(plan), user=None)
    now = timezone.now()
    left = PrintJob.objects.create(
        revision=revision,
        paper="a4",
        status="running",
        step="Drawing",
        started_at=now - printing.WORKER_GONE_AFTER - timedelta(seconds=1),
    )
    busy = PrintJob.objects.create(
        revision=revision,
        paper="a4",
        status="running",
        step="Drawing",
        started_at=now - printing.WORKER_GONE_AFTER + timedelta(seconds=30),
    )
    html = fitter_client.get(reverse("fittings:print_status", args=[left.pk]), headers={"HX-Request": "true"})
    left.refresh_from_db()
    assert left.status == "failed" and left.finished_at is not None and "worker stopped" in left.error
    assert "hx-trigger" not in html.content.decode() and "Try again" in html.content.decode()
    html = fitter_client.get(reverse("fittings:print_status", args=[busy.pk]), headers={"HX-Request": "true"})
    busy.refresh_from_db()
    assert busy.status == "running" and 'hx-trigger="every 1s"' in html.content.decode()


@pytest.mark.django_db
@pytest.mark.urls(__name__)
def test_it_says_when_no_worker_takes_the_job(fitter_client, plan):
    revision = plan_services.issue_revision(revision=selectors.latest_revision(plan), user=None)
    fresh = PrintJob.objects.create(revision=revision, paper="a4")
    stuck = PrintJob.objects.create(
        revision=revision, paper="a4", created_at=timezone.now() - printing.NO_WORKER_AFTER - timedelta(seconds=1)
    )
    page = {
        job: fitter_client.get(reverse("fittings:print_status", args=[job.pk])).content.decode()
        for job in (fresh, stuck)
    }
    assert "No document worker" not in page[fresh] and "No document worker" in page[stuck]
    assert 'hx-trigger="every 1s"' in page[stuck]  # it still waits: a worker may start
    stuck.refresh_from_db()
    assert stuck.status == "queued"


@pytest.mark.django_db
@pytest.mark.urls(__name__)
def test_it_clears_old_files_but_keeps_the_jobs_and_offers_a_reprint(fitter_client, plan, quick_render, settings):
    revision = plan_services.issue_revision(revision=selectors.latest_revision(plan), user=None)
    old, recent = (PrintJob.objects.create(revision=revision, paper="a4") for _ in range(2))
    for job in (old, recent):
        assert run_print_job(job.pk) == "done"
    old.refresh_from_db()
    old_files = [old.work_order.path, old.cutting_sheet.path]
    PrintJob.objects.filter(pk=old.pk).update(finished_at=timezone.now() - timedelta(days=31))
    PrintJob.objects.filter(pk=recent.pk).update(finished_at=timezone.now() - timedelta(days=29))
    out = io.StringIO()
    call_command("clear_old_prints", stdout=out)  # the default: 30 days
    assert "Cleared the files of 1 print older than 30 days" in out.getvalue()
    old.refresh_from_db()
    recent.refresh_from_db()
    assert old.status == "done" and not old.work_order and not old.cutting_sheet
    assert not any(Path(p).exists() for p in old_files)
    assert Path(recent.work_order.path).read_bytes() == PDF_STUB + b"WO"
    page = fitter_client.get(reverse("fittings:print_status", args=[old.pk])).content.decode()
    assert "cleared after 30 days" in page and "Print again" in page
    assert fitter_client.get(reverse("fittings:print_download", args=[old.pk, "work-order"])).status_code == 404
    call_command("clear_old_prints", "--days", "1", stdout=out)
    recent.refresh_from_db()
    assert not recent.work_order
    with pytest.raises(CommandError, match="at least 1"):
        call_command("clear_old_prints", "--days", "0")


@pytest.mark.django_db
@pytest.mark.urls(__name__)
def test_it_sends_anonymous_visitors_to_the_login(client, plan, quick_render):
    revision = selectors.latest_revision(plan)
    job = PrintJob.objects.create(revision=revision, paper="a4")
    for url in (
        reverse("fittings:print_download", args=[job.pk, "work-order"]),
        reverse("fittings:print_status", args=[job.pk]),
        start_url(revision),
    ):
        response = client.get(url)
        assert response.status_code == 302 and response["Location"].startswith(reverse("login"))
    response = client.post(start_url(revision), {"paper": "a4", "kind": "both"})
    assert response.status_code == 302 and response["Location"].startswith(reverse("login"))
    revision.refresh_from_db()
    assert revision.status == RevisionStatus.DRAFT


@pytest.mark.django_db
@pytest.mark.urls(__name__)
def test_it_answers_404_for_what_does_not_exist(fitter_client, plan, quick_render):
    revision = selectors.latest_revision(plan)
    assert fitter_client.get(reverse("fittings:print_status", args=[999999])).status_code == 404
    assert fitter_client.get(reverse("fittings:print_download", args=[999999, "work-order"])).status_code == 404
    assert fitter_client.get(reverse("fittings:print_start", args=[plan.pk, 99])).status_code == 404
    assert fitter_client.post(reverse("fittings:print_start", args=[999999, 1]), {"paper": "a4"}).status_code == 404
    job = PrintJob.objects.create(revision=revision, paper="a4")
    # Not drawn yet, and a document that does not exist.
    assert fitter_client.get(reverse("fittings:print_download", args=[job.pk, "work-order"])).status_code == 404
    assert fitter_client.get(reverse("fittings:print_download", args=[job.pk, "invoice"])).status_code == 404


@pytest.mark.django_db
@pytest.mark.urls(__name__)
@pytest.mark.parametrize("data", [{"paper": "a3", "kind": "both"}, {"paper": "a4", "kind": "poster"}, {}])
def test_it_refuses_bad_choices_with_a_message(fitter_client, plan, quick_render, data):
    revision = selectors.latest_revision(plan)
    response = fitter_client.post(start_url(revision), data)
    assert response.status_code == 400
    assert "Select a valid choice" in response.content.decode() or "This field is required" in response.content.decode()
    revision.refresh_from_db()
    assert revision.status == RevisionStatus.DRAFT and not PrintJob.objects.exists()


@pytest.mark.django_db
@pytest.mark.urls(__name__)
def test_it_offers_the_print_form_and_refuses_other_methods(fitter_client, plan):
    revision = selectors.latest_revision(plan)
    page = fitter_client.get(start_url(revision))
    html = page.content.decode()
    assert page.status_code == 200 and "Issue and print" in html
    assert '<option value="letter" selected>' in html  # the plan is kept in inches
    assert fitter_client.put(start_url(revision)).status_code == 405


@pytest.mark.django_db
@pytest.mark.urls(__name__)
def test_it_lets_the_workroom_print_issued_revisions_only(workroom_client, fitter_user, plan, quick_render):
    revision = selectors.latest_revision(plan)
    refused = workroom_client.get(start_url(revision))
    page = refused.content.decode()
    # A draft is refused in words, with the way to the workroom's queue (not a dead end).
    assert refused.status_code == 403 and "once it is issued" in page and "Issue and print" not in page
    assert workroom_client.post(start_url(revision), {"paper": "a4", "kind": "both"}).status_code == 403
    revision.refresh_from_db()
    assert revision.status == RevisionStatus.DRAFT and not PrintJob.objects.exists()
    plan_services.issue_revision(revision=revision, user=fitter_user)
    response = workroom_client.post(start_url(revision), {"paper": "a4", "kind": "work_order"})
    job = PrintJob.objects.get()
    assert response.status_code == 302 and job.status == "done" and job.work_order and not job.cutting_sheet
    download = workroom_client.get(reverse("fittings:print_download", args=[job.pk, "work-order"]))
    assert b"".join(download.streaming_content) == PDF_STUB + b"WO"


@pytest.mark.django_db
@pytest.mark.urls(__name__)
def test_it_refuses_to_issue_a_draft_the_engine_found_errors_in(fitter_client, fitter_user, reducing_client, corset_12):
    session = MeasurementSession.objects.create(client=reducing_client, unit="cm")
    session.measurements.create(code="bust_girth", value_mm=950)  # no waist, underbust, abdomen or hip
    plan = plan_services.start_plan(
        client=reducing_client, session=session, pattern=corset_12, garment="Corset", user=fitter_user
    )
    revision = selectors.latest_revision(plan)
    response = fitter_client.post(start_url(revision), {"paper": "a4", "kind": "both"})
    assert response.status_code == 400
    assert "problems to resolve before it can be printed" in response.content.decode()
    revision.refresh_from_db()
    assert revision.status == RevisionStatus.DRAFT and not PrintJob.objects.exists()


@pytest.mark.django_db
@pytest.mark.urls(__name__)
def test_it_records_a_failed_drawing_in_words(fitter_client, plan, monkeypatch):
    def broken(data, paper, pattern=None):
        raise RuntimeError("the pen ran dry")

    monkeypatch.setattr("fittings.printing.work_order.render_work_order", broken)
    revision = selectors.latest_revision(plan)
    response = fitter_client.post(start_url(revision), {"paper": "a4", "kind": "both"})
    job = PrintJob.objects.get()
    assert response.status_code == 302 and job.status == "failed" and job.finished_at is not None
    assert "could not be drawn" in job.error and "the pen ran dry" in job.error
    page = fitter_client.get(response["Location"]).content.decode()
    assert "the pen ran dry" in page and "Try again" in page
    assert fitter_client.get(reverse("fittings:print_download", args=[job.pk, "work-order"])).status_code == 404


@pytest.mark.django_db
@pytest.mark.urls(__name__)
def test_it_prints_the_client_name_only_where_the_atelier_allows_it(settings, plan):
    revision = selectors.latest_revision(plan)
    client = plan.client
    assert client_label(client) == client.reference
    data = document_data(revision, BASE_URL)
    assert data.client_label == client.reference and client.name not in data.client_label
    assert data.revision_url == BASE_URL + reverse("fittings:revision_detail", args=[plan.pk, revision.number])
    settings.ATELIER_PRINT_CLIENT_NAME = True
    assert client_label(client) == f"{client.reference} {client.name}"


@pytest.mark.django_db
@pytest.mark.urls(__name__)
def test_it_runs_a_job_once(plan, quick_render):
    revision = selectors.latest_revision(plan)
    job = PrintJob.objects.create(revision=revision, paper="a4", kind="cutting_sheet")
    assert run_print_job(job.pk) == "done"
    assert run_print_job(job.pk) == "skipped"
    assert run_print_job(999999) == "skipped"
    job.refresh_from_db()
    assert job.cutting_sheet and not job.work_order and job.started_at and job.finished_at


# Committed for real: the worker closes "old" connections between tasks, which on PostgreSQL
# would close the connection holding a test's open transaction.
@pytest.mark.django_db(transaction=True)
@pytest.mark.urls(__name__)
def test_it_leaves_the_drawing_to_the_worker_when_tasks_are_queued(settings, fitter_client, plan, quick_render):
    from django.core.management import call_command

    settings.TASKS = {"default": {"BACKEND": "django_tasks_db.DatabaseBackend"}}
    revision = selectors.latest_revision(plan)
    response = fitter_client.post(start_url(revision), {"paper": "a4", "kind": "both"})
    job = PrintJob.objects.get()
    # The request only queued the job: nothing drawn yet, and the page keeps asking.
    assert response.status_code == 302 and job.status == "queued" and job.task_id
    revision.refresh_from_db()
    assert revision.status == RevisionStatus.ISSUED
    fragment = fitter_client.get(response["Location"], headers={"HX-Request": "true"}).content.decode()
    assert 'hx-trigger="every 1s"' in fragment
    call_command("db_worker", "--batch", "--no-startup-delay", "--no-reload", verbosity=0)
    job.refresh_from_db()
    assert job.status == "done" and job.work_order and job.cutting_sheet


@pytest.mark.django_db
@pytest.mark.urls(__name__)
def test_it_shows_print_jobs_read_only_in_the_admin(admin_client, plan, quick_render):
    revision = plan_services.issue_revision(revision=selectors.latest_revision(plan), user=None)
    job = PrintJob.objects.create(revision=revision, paper="a4")
    run_print_job(job.pk)
    listing = admin_client.get(reverse("admin:fittings_printjob_changelist"))
    assert listing.status_code == 200 and "Work order and cutting sheet" in listing.content.decode()
    page = admin_client.get(reverse("admin:fittings_printjob_change", args=[job.pk]))
    html = page.content.decode()
    assert page.status_code == 200
    assert reverse("fittings:print_download", args=[job.pk, "cutting-sheet"]) in html
    assert admin_client.get(reverse("admin:fittings_printjob_add")).status_code == 403


# --- the same file on every machine -------------------------------------------------------------
# Debian 12 ships HarfBuzz 6 and, unless libharfbuzz-subset0 is installed, WeasyPrint subsets the
# embedded fonts with fontTools, which dates each subset with the clock; Debian 13 subsets with
# HarfBuzz.  Both ways a reprint must be the very same file.


@pytest.fixture
def fonttools_subsetting(monkeypatch):
    """WeasyPrint as on a machine without HarfBuzz-Subset, and a clock that moves a minute a read."""
    import weasyprint.pdf.fonts as weasy_fonts
    from fontTools.misc import timeTools

    engine.weasyprint()
    calls = []
    real = weasy_fonts.Font._fonttools_subset

    def counted(font, *args):
        calls.append(font.family)
        return real(font, *args)

    clock = iter(range(1_800_000_000, 1_900_000_000, 60))
    monkeypatch.setattr(weasy_fonts, "harfbuzz_subset", None)
    monkeypatch.setattr(weasy_fonts.Font, "_fonttools_subset", counted)
    monkeypatch.setattr(timeTools.time, "time", lambda: float(next(clock)))
    return calls


def test_it_prints_the_same_bytes_when_fonts_are_subset_with_fonttools(fonttools_subsetting, strong):
    first = render_work_order(strong, "a4")
    again = render_work_order(strong, "a4")
    assert fonttools_subsetting  # the fontTools path really ran
    assert first == again


def test_it_keeps_the_font_library_notes_off_the_console(fonttools_subsetting, caplog):
    with caplog.at_level("INFO"):
        engine.html_to_pdf("<!doctype html><p>One line.</p>")
    assert fonttools_subsetting
    assert [r.getMessage() for r in caplog.records if r.levelno >= logging.WARNING] == []


def test_it_imports_weasyprint_without_its_deprecation_warning_where_harfbuzz_subset_is_missing(tmp_path):
    """A fresh process on a machine without libharfbuzz-subset0 (the library made unloadable), with
    every warning shown and the app's logging: a print says nothing on the console."""
    import subprocess
    import sys

    script = (
        "import cffi, os, warnings\n"
        "warnings.simplefilter('default')\n"
        "real = cffi.FFI.dlopen\n"
        "def dlopen(self, name, *a, **k):\n"
        "    if 'subset' in str(name): raise OSError('not installed')\n"
        "    return real(self, name, *a, **k)\n"
        "cffi.FFI.dlopen = dlopen\n"
        "import django; django.setup()\n"
        "from fittings.printing import engine\n"
        "pdf = engine.html_to_pdf('<!doctype html><p>One line.</p>')\n"
        "import weasyprint.text.ffi as ffi\n"
        "print('subset library:', ffi.harfbuzz_subset, len(pdf) > 500)\n"
    )
    env = {
        **os.environ,
        "DJANGO_SETTINGS_MODULE": "atelier.settings",
        "ATELIER_DATA_DIR": str(tmp_path),
        "PYTHONWARNINGS": "default",
    }
    env.pop("SOURCE_DATE_EPOCH", None)
    done = subprocess.run(
        [sys.executable, "-c", script],
        capture_output=True,
        text=True,
        env=env,
        cwd=Path(__file__).resolve().parents[2],
        timeout=120,
    )
    assert done.returncode == 0, done.stderr
    assert done.stdout.strip() == "subset library: None True"
    assert "HarfBuzz" not in done.stderr and "fontTools" not in done.stderr, done.stderr
