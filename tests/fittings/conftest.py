import pytest

from fittings.models import Client
from fittings.services import plans as plan_services
from patterns.models import BasePattern


@pytest.fixture
def reducing_client(demo_atelier):
    """The demo client who asks for a strong reduction (two sessions, read in inches)."""
    return Client.objects.get(reference="WF-0102")


@pytest.fixture
def corset_12(demo_atelier):
    return BasePattern.objects.get(garment="overbust corset", size_label="12")


@pytest.fixture
def plan(reducing_client, corset_12, fitter_user):
    session = reducing_client.sessions.order_by("-taken_on").first()
    return plan_services.start_plan(client=reducing_client, session=session, pattern=corset_12,
                                    garment="Daily corset", user=fitter_user)
