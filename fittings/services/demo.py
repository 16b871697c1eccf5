"""Loading the invented demo atelier (patterns/demo.py) into an empty database."""

import os
from dataclasses import dataclass, field
from datetime import timedelta

from django.contrib.auth import get_user_model
from django.contrib.auth.models import Group
from django.db import transaction
from django.utils import timezone
from django.utils.crypto import get_random_string

from atelier.roles import FITTER
from fittings.models import Client, Measurement, MeasurementSession
from patterns import demo
from patterns.core.units import quantize_mm
from patterns.models import BasePattern, GarmentKind, SizeRun
from patterns.services import save_block

DEMO_USERNAME = "demo"
# Easy to read off a screen and type on a tablet: no 0/O, 1/l/I.
_PASSWORD_CHARS = "abcdefghjkmnpqrstuvwxyz23456789"


@dataclass
class DemoLogin:
    username: str
    password: str | None  # None when the login existed already (password unchanged)


@dataclass
class DemoAtelier:
    patterns: list[BasePattern] = field(default_factory=list)
    clients: list[Client] = field(default_factory=list)
    login: DemoLogin | None = None


def atelier_is_empty() -> bool:
    """No clients (deleted ones included) and no base patterns."""
    return not Client.all_objects.exists() and not BasePattern.objects.exists()


def ensure_demo_login(password: str | None = None) -> DemoLogin:
    """The demo fitter's login, made if missing.

    The password is ``password``, else ATELIER_DEMO_PASSWORD, else a new
    random one; it is returned only when the login is made, to be shown once.
    """
    User = get_user_model()
    user = User.objects.filter(username=DEMO_USERNAME).first()
    if user is not None:
        return DemoLogin(DEMO_USERNAME, None)
    password = password or os.environ.get("ATELIER_DEMO_PASSWORD") or get_random_string(12, _PASSWORD_CHARS)
    user = User.objects.create_user(DEMO_USERNAME, password=password, first_name="Demo", last_name="Fitter")
    user.groups.add(Group.objects.get_or_create(name=FITTER)[0])
    return DemoLogin(DEMO_USERNAME, password)


@transaction.atomic
def load_demo_atelier(password: str | None = None) -> DemoAtelier | None:
    """Load the demo size run, bodice, the drawn (imported) underbust block, clients and their sessions,
    and the demo login.

    Does nothing and returns None unless the atelier is empty, so it is safe
    to call on every start.
    """
    if not atelier_is_empty():
        return None
    loaded = DemoAtelier()
    loaded.login = ensure_demo_login(password)
    fitter = get_user_model().objects.get(username=DEMO_USERNAME)

    run_blocks = demo.corset_run()
    run = SizeRun.objects.create(name=run_blocks[0].name, garment=GarmentKind(run_blocks[0].garment))
    loaded.patterns = [save_block(block, size_run=run) for block in run_blocks]
    loaded.patterns.append(save_block(demo.bodice_block()))
    loaded.patterns.append(save_block(demo.drawn_underbust_block()))

    today = timezone.localdate()
    for spec in demo.DEMO_CLIENTS:
        first_day = today - timedelta(days=max(s["days_ago"] for s in spec["sessions"]))
        client = Client.objects.create(
            reference=spec["reference"],
            name=spec["name"],
            contact=spec["contact"],
            notes=spec["notes"],
            consent_given_on=first_day,
            created_by=fitter,
        )
        for session_spec in spec["sessions"]:
            session = MeasurementSession.objects.create(
                client=client,
                taken_on=today - timedelta(days=session_spec["days_ago"]),
                measured_by=fitter,
                kind=session_spec["kind"],
                unit=session_spec["unit"],
            )
            Measurement.objects.bulk_create(
                Measurement(session=session, code=code, value_mm=quantize_mm(value))
                for code, value in session_spec["values"].items()
            )
        loaded.clients.append(client)

    add_demo_plans(loaded)
    return loaded


def add_demo_plans(loaded: DemoAtelier) -> None:
    """Plans for two demo clients, so the history has something to reopen.

    The first corset client has an issued plan; the strong-reduction client
    a plan whose first revision was tried on as a toile, pinned, and carried
    into a second, draft revision.  The bodice client is left for the fitter
    to plan (the two-minute route in the README).
    """
    from fittings.services import plans as plan_services
    from patterns.core.allot import Override, PlanOptions
    from patterns.core.units import DEFAULT_STEP_MM

    fitter = get_user_model().objects.get(username=DEMO_USERNAME)
    clients = {c.reference: c for c in loaded.clients}
    corset = {p.size_label: p for p in loaded.patterns if p.garment == "overbust corset"}

    hester = clients["WF-0101"]
    plan = plan_services.start_plan(
        client=hester, session=hester.sessions.get(), pattern=corset["10"], garment="Summer wedding corset", user=fitter
    )
    plan_services.issue_revision(revision=plan.revisions.get(), user=fitter)

    odalys = clients["WF-0102"]
    first = odalys.sessions.order_by("taken_on").first()
    options = PlanOptions(
        ease={"bust": -25.0, "underbust": -40.0, "waist": -150.0, "abdomen": -50.0, "hip": 0.0},
        lacing_gap_mm=50.0,
        step_mm=DEFAULT_STEP_MM["in"],
        unit="in",
        policy="sides_first",
        overrides=(Override("Side seam", "waist", "Side front", -12.7),),
    )
    plan = plan_services.start_plan(
        client=odalys, session=first, pattern=corset["12"], garment="Daily-wear corset", user=fitter, options=options
    )
    tried = plan_services.issue_revision(revision=plan.revisions.get(), user=fitter)
    plan_services.record_pins(
        revision=tried,
        pins=[("Back princess seam", "waist", -6.35)],
        note="Toile gaped at the back waist; pinned out 1/4 in.",
        user=fitter,
    )
    plan.refresh_from_db()
    plan_services.revision_with_pins(revision=tried, user=fitter, expected_version=plan.version)
