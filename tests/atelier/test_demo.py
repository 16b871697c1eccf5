"""Loading the invented demo atelier into an empty database."""

from decimal import Decimal

import pytest
from django.contrib.auth import get_user_model
from django.core.management import call_command

from atelier.roles import FITTER, role_of
from fittings.models import Client, Measurement, MeasurementSession
from fittings.services.demo import load_demo_atelier
from patterns import demo
from patterns.core.allot import Body, PlanOptions, allot
from patterns.demo import CORSET_SIZES, bodice_block, corset_run
from patterns.models import BasePattern, SizeRun
from patterns.services import save_block
from tests.conftest import DEMO_PASSWORD

pytestmark = pytest.mark.django_db


def test_it_loads_three_clients_and_seven_patterns(demo_atelier):
    assert Client.objects.count() == 3
    assert BasePattern.objects.count() == 7
    run = SizeRun.objects.get()
    assert list(run.patterns.order_by("size_order").values_list("size_label", flat=True)) == [
        "6",
        "8",
        "10",
        "12",
        "14",
    ]
    assert set(BasePattern.objects.filter(size_run=None).values_list("garment", flat=True)) == {
        "bodice",
        "underbust corset",
    }
    assert MeasurementSession.objects.count() == 4
    assert Measurement.objects.count() == sum(len(s["values"]) for c in demo.DEMO_CLIENTS for s in c["sessions"])


def test_it_stores_inch_readings_exactly(demo_atelier):
    # 1 in = 25.4 mm exactly (NIST SP 811, appendix B.8): 39 1/2 in = 1003.3 mm.
    first = MeasurementSession.objects.filter(client__reference="WF-0102").order_by("taken_on").first()
    assert first.unit == "in"
    assert first.measurements.get(code="bust_girth").value_mm == Decimal("1003.3000")
    # 7 1/2 in = 190.5 mm
    assert first.measurements.get(code="bust_span").value_mm == Decimal("190.5000")


def test_it_keeps_the_order_of_the_sessions(demo_atelier):
    kinds = list(
        MeasurementSession.objects.filter(client__reference="WF-0102")
        .order_by("taken_on")
        .values_list("kind", flat=True)
    )
    assert kinds == ["first", "toile"]


def test_it_makes_a_demo_fitter_login(demo_atelier):
    user = get_user_model().objects.get(username="demo")
    assert user.check_password(DEMO_PASSWORD)
    assert role_of(user) == FITTER
    assert not user.is_staff and not user.is_superuser
    assert demo_atelier.login.password == DEMO_PASSWORD


def test_it_takes_the_demo_password_from_the_environment(monkeypatch):
    monkeypatch.setenv("ATELIER_DEMO_PASSWORD", "from-the-env-123")
    loaded = load_demo_atelier()
    assert loaded.login.password == "from-the-env-123"
    assert get_user_model().objects.get(username="demo").check_password("from-the-env-123")


def test_it_loads_only_once(demo_atelier):
    assert load_demo_atelier() is None
    assert Client.objects.count() == 3
    assert BasePattern.objects.count() == 7


def test_it_includes_a_block_imported_from_its_drawing(demo_atelier):
    """The drawn underbust block comes through the importer from patterns/examples/, its widths as drawn."""
    from patterns.selectors import block_for

    stored = block_for(BasePattern.objects.get(garment="underbust corset"))
    drawn = demo.drawn_underbust_block()
    assert all(p.curves is not None for p in drawn.panels)
    assert stored.level_names == ("underbust", "waist", "abdomen", "hip")
    # Drafted to the demo size 10 less the 5 cm lacing gap: half of (31 in - 50 mm) at the underbust.
    assert stored.half_girth("underbust") == pytest.approx((31 * 25.4 - 50) / 2, abs=0.1)
    assert stored.half_girth("waist") == pytest.approx((29 * 25.4 - 50) / 2, abs=0.1)
    assert stored.half_girth("hip") == pytest.approx((39.5 * 25.4 - 50) / 2, abs=0.1)
    for a, b in zip(stored.panels, drawn.panels):
        assert a.name == b.name
        for lv in stored.level_names:
            assert a.width(lv) == pytest.approx(b.width(lv), abs=0.001)


def test_it_leaves_an_atelier_with_its_own_patterns_alone():
    save_block(demo.bodice_block())
    assert load_demo_atelier() is None
    assert Client.objects.count() == 0


def test_it_prints_the_demo_password_once(capsys):
    call_command("load_demo", "--password", "printed-once-77")
    assert "printed-once-77" in capsys.readouterr().out
    call_command("load_demo")
    out = capsys.readouterr().out
    assert "not loaded" in out
    assert "printed-once-77" not in out


@pytest.mark.parametrize("block", [*corset_run(), bodice_block()], ids=lambda b: f"{b.garment} {b.size}")
def test_it_draws_every_demo_panel_down_past_every_level(block):
    """Each level of a demo block crosses every panel, at both stitch lines."""
    for level in block.levels:
        for p in block.panels:
            assert max(p.top_left.y, p.top_right.y) <= level.y <= min(p.bottom_left.y, p.bottom_right.y), (
                level.name,
                p.name,
            )
    result = allot(block, Body(girths=dict(CORSET_SIZES["12"])), PlanOptions())
    assert "level_beyond_panel" not in [f.code for f in result.findings]
