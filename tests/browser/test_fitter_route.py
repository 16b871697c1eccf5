"""The fitting as a fitter finds it, in a real Chromium with touch, upright and sideways: every refusal seen
where she looks, every length in her unit, every step a tap.  A screenshot per step in test-artifacts/browser/."""

import pytest

from fittings.models import Client
from tests.browser.conftest import ARTIFACTS, sign_in

pytestmark = [pytest.mark.browser, pytest.mark.django_db(transaction=True)]

VIEWS = {"portrait": {"width": 800, "height": 1280}, "landscape": {"width": 1280, "height": 800}}


@pytest.fixture(params=list(VIEWS))
def held(browser, request):
    context = browser.new_context(viewport=VIEWS[request.param], has_touch=True, is_mobile=True, device_scale_factor=1)
    page = context.new_page()
    page.set_default_timeout(30_000)
    shots = ARTIFACTS / request.node.name
    shots.mkdir(parents=True, exist_ok=True)
    counter = iter(range(1, 100))

    def snap(name, full=True):
        page.screenshot(path=str(shots / f"{next(counter):02d}-{name}.png"), full_page=full)

    page.snap = snap
    page.held = request.param
    yield page
    context.close()


def in_view(page, selector):
    """The element's box lies within the window's width (not cut off at the right)."""
    return page.eval_on_selector(
        selector,
        "e => { const b = e.getBoundingClientRect(); return b.left >= 0 && b.right <= window.innerWidth + 0.5; }",
    )


def test_it_walks_the_fitting_with_every_message_where_the_fitter_looks(held, live_server, demo_atelier):
    page = held
    sign_in(page, live_server)
    client = Client.objects.get(reference="WF-0102")  # read in inches
    page.goto(f"{live_server.url}/clients/{client.pk}/")
    assert page.locator("text=Edit details").count() == 1 and page.locator("text=Compare any two").count() == 1
    page.snap("client")

    # The chooser opens without an error, with two different choices.
    page.tap("text=Compare any two")
    page.wait_for_selector("form.compare-chooser")
    assert page.locator(".error-box").count() == 0
    assert page.input_value("#a") != page.input_value("#b")
    page.tap("form.compare-chooser button")
    page.wait_for_selector("table.compare")
    page.snap("compare")

    # Advice beside the field it is about, named, in inches.
    page.goto(f"{live_server.url}/clients/{client.pk}/sessions/new/")
    page.check("input[name=unit][value=in]")
    page.fill("#id_bust_girth", "30")
    page.fill("#id_underbust_girth", "33")
    page.wait_for_selector("#advice-bust_girth >> text=Bust is smaller than underbust")
    assert "Bust girth:" in page.inner_text("#session-notes")
    page.snap("advice-beside-field")
    # The longest kind of session reads whole in its box ("First measuremen" was cut off): the
    # option's text, measured in the select's own font, fits inside the box less its padding and arrow.
    room = page.eval_on_selector(
        "#id_kind",
        """select => {
        const style = getComputedStyle(select);
        const ctx = document.createElement("canvas").getContext("2d");
        ctx.font = `${style.fontWeight} ${style.fontSize} ${style.fontFamily}`;
        const widest = Math.max(...[...select.options].map(o => ctx.measureText(o.text).width));
        const inner = select.clientWidth - parseFloat(style.paddingLeft) - parseFloat(style.paddingRight);
        return inner - widest;
    }""",
    )
    assert room >= 0, f"the session kind is cut by {-room:.0f} px"

    # The plan page: a mistyped ease and a mistyped cell are swapped in with their messages.
    plan = client.plans.order_by("-created_at").first()
    page.goto(f"{live_server.url}/plans/{plan.pk}/")
    page.wait_for_selector("#plan-result table")
    page.fill("#id_ease_waist", "-2 1/")
    page.wait_for_selector("#plan-result >> text=Some values cannot be read")
    assert "not a length in inches" in page.inner_text("#id_ease_waist-error")
    assert page.is_visible("#id_ease_waist-error")
    page.snap("refused-ease")
    page.fill("#id_ease_waist", "-2 1/2")
    page.wait_for_selector("#plan-result >> text=Some values cannot be read", state="detached")
    assert page.inner_text("#id_ease_waist-error") == ""
    cell = page.locator("input.cell").first
    cell.fill("abc")
    page.wait_for_selector("input.cell[aria-invalid=true]")
    assert "edge" in page.inner_text("#live-problems")
    page.snap("refused-cell")
    page.locator("input.cell[aria-invalid=true]").fill("")
    page.wait_for_selector("#live-problems", state="detached")

    # The girths table is in view after an ease change; the raw-edge table scrolls visibly with sticky columns.
    page.evaluate("window.scrollTo(0, 0)")
    page.fill("#id_ease_bust", "-1")
    page.wait_for_timeout(1500)
    box = page.eval_on_selector("#levels-heading", "e => e.closest('section').getBoundingClientRect().top")
    assert box < page.viewport_size["height"]
    scroller = "#plan-result .edges-scroll"
    wide = page.eval_on_selector(scroller, "e => e.scrollWidth > e.clientWidth")
    if wide:
        seam_left = page.eval_on_selector(scroller + " tbody th", "e => e.getBoundingClientRect().left")
        page.eval_on_selector(scroller, "e => { e.scrollLeft = e.scrollWidth; }")
        assert page.eval_on_selector(scroller + " tbody th", "e => e.getBoundingClientRect().left") == pytest.approx(
            seam_left, abs=1
        )
        assert page.is_visible(".swipe-hint")
    assert in_view(page, scroller + " thead th:last-child")  # the hip heading can be brought into view
    page.snap("plan-table")

    # Why a seam is locked, at its dot.
    dots = page.locator("#plan-result details.why summary")
    if dots.count():
        dots.first.tap()
        assert (
            "Locked: the base pattern keeps"
            in page.locator("#plan-result details.why[open] .why-text").first.inner_text()
        )
        page.snap("why-locked")

    # The preview at its own size: labels of about 12 px, not 7.
    page.wait_for_function(
        "() => { const i = document.querySelector('.preview img'); return i && i.complete && i.naturalWidth > 0; }"
    )
    sizes = page.eval_on_selector(".preview img", "i => [i.clientWidth, i.naturalWidth]")
    assert sizes[0] == pytest.approx(sizes[1], abs=2)
    page.snap("preview")

    # Opened alone, it renders: the figure's white ground is white (its inline styles are allowed).
    preview = page.get_attribute(".preview img", "src")
    page.goto(f"{live_server.url}{preview}")
    fill = page.evaluate(
        "() => getComputedStyle(document.querySelector('#patch_1 path') || document.querySelector('path')).fill"
    )
    assert fill in ("rgb(255, 255, 255)", "#ffffff"), fill
    page.snap("preview-alone", full=False)  # an SVG document has no page to scroll

    # Toile pins: level headings, each cell named, the hip column in view.
    revision = plan.revisions.order_by("-number").first()
    page.goto(f"{live_server.url}/plans/{plan.pk}/revisions/{revision.number}/pins/")
    headings = page.locator("table.pins thead th").all_inner_texts()
    assert headings[0] == "Seam" and headings[-1] == "Hip"
    assert in_view(page, "table.pins thead th:last-child")
    assert page.get_attribute("table.pins tbody input", "aria-label").endswith(": pin, in")
    page.snap("pins")

    # A proof of the draft, and the way back from the print page.
    page.goto(f"{live_server.url}/plans/{plan.pk}/revisions/{revision.number}/")
    if revision.status == "draft":
        assert page.locator("text=Proof of the work order").count() == 1
    page.goto(f"{live_server.url}/plans/{plan.pk}/revisions/{revision.number}/print/")
    page.tap("text=Back to")
    page.wait_for_url(f"{live_server.url}/plans/{plan.pk}/revisions/{revision.number}/")
    page.snap("back-from-print")


def test_it_gives_the_owner_the_admin_and_the_workroom_its_queue(held, live_server, demo_atelier, make_user):
    page = held
    make_user("owner", username="owner-b", is_staff=True, is_superuser=True)
    sign_in(page, live_server, "owner-b", "a-long-test-password")
    page.tap("text=Admin")
    page.wait_for_url(f"{live_server.url}/admin/")
    page.snap("admin")
    page.goto(f"{live_server.url}/")
    page.locator("form[action='/logout/'] button").tap()
    page.wait_for_load_state("networkidle")
    make_user("workroom", username="cutter")
    sign_in(page, live_server, "cutter", "a-long-test-password", lands_on="/workroom/")
    assert page.locator("table.queue").count() == 1 and "+44" not in page.content()
    page.snap("workroom-queue")
