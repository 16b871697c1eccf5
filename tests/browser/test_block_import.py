"""Importing a drawn block on a tablet, in a real browser: the file picked, the block stored, its pieces offered."""

import pytest

from patterns.demo import DRAWN_BLOCK_FILE
from patterns.models import BasePattern
from tests.browser.conftest import fill_in, sign_in

pytestmark = [pytest.mark.browser, pytest.mark.django_db(transaction=True)]


def test_it_imports_a_drawn_block_from_the_client_list(tablet, live_server, demo_atelier):
    page = tablet
    sign_in(page, live_server)
    page.tap("text=Import a block (DXF or SVG)")
    page.wait_for_selector("h1:has-text('Import a block from a drawing')")
    page.set_input_files("#id_file", str(DRAWN_BLOCK_FILE))
    fill_in(page, name="Drawn on the tablet", size_label="10", front_panels="2")
    page.select_option("#id_garment", "underbust corset")
    page.snap("import-form")
    page.tap("button:has-text('Import')")
    page.wait_for_selector("h1:has-text('Drawn on the tablet, size 10')")
    page.snap("imported")
    pattern = BasePattern.objects.get(name="Drawn on the tablet")
    assert pattern.panels.count() == 4
    assert page.locator("caption:has-text('Width between stitch lines')").is_visible()
    assert page.locator("text=4 panels, half pattern").is_visible()
    assert page.locator("th:has-text('Side back')").is_visible()
    # Widths as drawn (the file's underbust panels: 92, 92, 92.2 and 92.5 mm).
    row = page.locator("tr:has-text('Underbust')").inner_text()
    for width in ("92.0", "92.2", "92.5"):
        assert width in row
    assert page.locator("a:has-text('Pieces, DXF (mm)')").get_attribute("href").endswith("/pieces.dxf")
