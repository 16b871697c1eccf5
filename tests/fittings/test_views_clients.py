"""Clients, sessions, the timeline and comparisons."""

import io
from decimal import Decimal

import pytest
from django.urls import reverse
from PIL import Image

from fittings.models import Client, Measurement, MeasurementSession, Photo, Plan
from fittings.services import plans as plan_services

pytestmark = pytest.mark.django_db


def session_post(**values):
    data = {"taken_on": "2026-11-30", "kind": "first", "unit": "cm"}
    data.update(values)
    return data


def test_it_creates_a_client(fitter_client):
    response = fitter_client.post(reverse("fittings:client_new"), {"reference": "WF-0200", "name": "Ione Carraway"})
    client = Client.objects.get(reference="WF-0200")
    assert response.status_code == 302 and response["Location"] == reverse("fittings:client_detail", args=[client.pk])


@pytest.mark.parametrize(
    "data",
    [
        {"reference": "", "name": "A"},
        {"reference": "WF-1", "name": ""},
        {"reference": "R" * 33, "name": "A"},
        {"reference": "WF-1", "name": "A", "consent_given_on": "yesterday"},
    ],
)
def test_it_refuses_a_bad_client_and_saves_nothing(fitter_client, data):
    response = fitter_client.post(reverse("fittings:client_new"), data)
    assert response.status_code == 400 and 'class="field-error"' in response.content.decode()
    assert Client.all_objects.count() == 0


def test_it_refuses_a_second_client_with_the_same_reference(fitter_client, demo_atelier):
    response = fitter_client.post(reverse("fittings:client_new"), {"reference": "WF-0101", "name": "Someone"})
    assert response.status_code == 400
    assert Client.all_objects.filter(reference="WF-0101").count() == 1


def test_it_reads_a_session_in_inches_with_fractions(fitter_client, demo_atelier):
    client = Client.objects.get(reference="WF-0101")
    data = session_post(unit="in", bust_girth="37 3/8", underbust_girth="31", waist_girth="29 1/16", done="1")
    response = fitter_client.post(reverse("fittings:session_new", args=[client.pk]), data)
    assert response.status_code == 302
    session = client.sessions.get(taken_on="2026-11-30")
    values = {m.code: m.value_mm for m in session.measurements.all()}
    # 1 in = 25.4 mm exactly (1959 international yard and pound agreement).
    assert values == {
        "bust_girth": Decimal("949.3250"),
        "underbust_girth": Decimal("787.4000"),
        "waist_girth": Decimal("738.1875"),
    }
    page = fitter_client.get(reverse("fittings:session_edit", args=[session.pk]))
    assert 'value="37 3/8"' in page.content.decode()


@pytest.mark.parametrize(
    "values",
    [
        {"bust_girth": "abc"},
        {"bust_girth": "-90"},
        {"bust_girth": "NaN"},
        {"bust_girth": "inf"},
        {"bust_girth": "9000"},
        {"bust_girth": "27 3/8"},
        {},
        {"bust_girth": "90", "kind": "fitting"},
        {"bust_girth": "90", "unit": "yd"},
        {"bust_girth": "90", "taken_on": "2026-13-45"},
    ],
)
def test_it_refuses_bad_readings_and_saves_nothing(fitter_client, demo_atelier, values):
    client = Client.objects.get(reference="WF-0101")
    before = (MeasurementSession.objects.count(), Measurement.objects.count())
    response = fitter_client.post(reverse("fittings:session_new", args=[client.pk]), session_post(**values))
    assert response.status_code == 400
    assert "field-error" in response.content.decode() or "error-box" in response.content.decode()
    assert (MeasurementSession.objects.count(), Measurement.objects.count()) == before


def test_it_advises_while_typing(fitter_client, demo_atelier):
    client = Client.objects.get(reference="WF-0101")
    response = fitter_client.post(
        reverse("fittings:session_check", args=[client.pk]),
        session_post(bust_girth="70", underbust_girth="80", waist_girth="110"),
        headers={"HX-Request": "true"},
    )
    html = response.content.decode()
    assert response.status_code == 200 and html.lstrip().startswith('<div id="session-notes"')
    assert "Bust is smaller than underbust" in html
    assert "since the last session" in html  # waist 110 cm against 74.2 cm last time


def test_it_rewrites_the_typed_readings_when_the_tape_unit_is_switched(fitter_client, demo_atelier):
    # 1 in = 25.4 mm exactly (international yard and pound agreement, 1959): 90 cm = 35.433 in, nearest
    # 1/16 in 35 7/16; 27 3/8 in = 695.325 mm, 69.5 cm to the millimetre.
    client = Client.objects.get(reference="WF-0101")
    url = reverse("fittings:session_convert", args=[client.pk])
    to_inches = fitter_client.post(
        url,
        session_post(unit="in", typed_unit="cm", bust_girth="90", waist_girth="70,5", hip_girth="lots"),
        headers={"HX-Request": "true"},
    )
    html = to_inches.content.decode()
    assert to_inches.status_code == 200 and html.lstrip().startswith('<fieldset class="card" id="session-measures"')
    assert 'name="bust_girth" value="35 7/16"' in html
    assert 'name="waist_girth" value="27 3/4"' in html  # 70.5 cm = 27.756 in
    assert 'name="hip_girth" value="lots"' in html  # not a length: left for the fitter to see
    assert 'name="typed_unit" value="in"' in html
    back = fitter_client.post(
        url, session_post(unit="cm", typed_unit="in", bust_girth="27 3/8"), headers={"HX-Request": "true"}
    ).content.decode()
    assert 'name="bust_girth" value="69.5"' in back and 'name="typed_unit" value="cm"' in back
    same = fitter_client.post(url, session_post(unit="cm", typed_unit="cm", bust_girth="90")).content.decode()
    assert 'name="bust_girth" value="90"' in same
    page = fitter_client.get(reverse("fittings:session_new", args=[client.pk])).content.decode()
    assert f'hx-post="{url}"' in page and 'name="typed_unit" value="cm"' in page


def test_it_refuses_an_unknown_tape_unit_when_switching(fitter_client, demo_atelier):
    client = Client.objects.get(reference="WF-0101")
    response = fitter_client.post(
        reverse("fittings:session_convert", args=[client.pk]),
        session_post(unit="furlong", typed_unit="cm", bust_girth="90"),
    )
    assert response.status_code == 400 and "Choose a tape unit" in response.content.decode()


def test_it_refuses_the_second_of_two_edits_of_one_session(client, make_user, demo_atelier):
    session = MeasurementSession.objects.get(client__reference="WF-0101")
    url = reverse("fittings:session_edit", args=[session.pk])
    a, b = make_user("fitter"), make_user("fitter")
    client.force_login(a)
    first = session_post(bust_girth="96", version=session.version, done="1")
    second = session_post(bust_girth="97", version=session.version, done="1")
    assert client.post(url, first).status_code == 302
    client.force_login(b)
    refused = client.post(url, second)
    assert refused.status_code == 409 and "Someone else saved" in refused.content.decode()
    assert session.measurements.get(code="bust_girth").value_mm == Decimal("960.0000")


def png_with_location():
    image = Image.new("RGB", (40, 30), (200, 120, 90))
    exif = Image.Exif()
    exif[0x8825] = {2: (51.0, 30.0, 0.0)}  # GPS latitude
    exif[0x010F] = "Camera maker"
    out = io.BytesIO()
    image.save(out, format="JPEG", exif=exif)
    out.seek(0)
    out.name = "front.jpg"
    return out


def test_it_keeps_a_photo_without_its_location(fitter_client, demo_atelier):
    client = Client.objects.get(reference="WF-0101")
    response = fitter_client.post(
        reverse("fittings:session_new", args=[client.pk]),
        session_post(bust_girth="95", done="1", photo_front=png_with_location()),
    )
    assert response.status_code == 302
    photo = Photo.objects.get()
    with Image.open(photo.image.open("rb")) as stored:
        assert stored.getexif() == {} or 0x8825 not in stored.getexif()
        assert stored.size == (40, 30)
    served = fitter_client.get(reverse("fittings:photo_file", args=[photo.pk]))
    assert served.status_code == 200 and served["Content-Type"] == "image/jpeg"


def test_it_refuses_a_file_that_is_not_a_picture(fitter_client, demo_atelier):
    client = Client.objects.get(reference="WF-0101")
    fake = io.BytesIO(b"<?php echo 'not a photo'; ?>" * 10)
    fake.name = "front.jpg"
    response = fitter_client.post(
        reverse("fittings:session_new", args=[client.pk]), session_post(bust_girth="95", done="1", photo_front=fake)
    )
    assert response.status_code == 400 and Photo.objects.count() == 0
    assert MeasurementSession.objects.filter(client=client).count() == 1


def test_it_shows_the_timeline_newest_first(fitter_client, demo_atelier):
    client = Client.objects.get(reference="WF-0102")
    html = fitter_client.get(reverse("fittings:client_detail", args=[client.pk])).content.decode()
    toile, first = html.index("Toile fitting"), html.index("First measurement")
    assert toile < first


def add_history(client, pattern, user, count):
    for i in range(count):
        session = MeasurementSession.objects.create(client=client, taken_on=f"2026-0{1 + i % 9}-1{i % 9}", unit="cm")
        Measurement.objects.create(session=session, code="bust_girth", value_mm=950 + i)
        for code, mm in (("underbust_girth", 800), ("waist_girth", 700), ("abdomen_girth", 880), ("hip_girth", 1000)):
            Measurement.objects.create(session=session, code=code, value_mm=mm)
        plan_services.start_plan(client=client, session=session, pattern=pattern, garment=f"Corset {i}", user=user)


def test_it_reads_a_client_page_in_the_same_queries_however_long_the_history(
    fitter_client, fitter_user, demo_atelier, django_assert_max_num_queries, django_assert_num_queries
):
    from patterns.models import BasePattern

    client = Client.objects.get(reference="WF-0101")
    pattern = BasePattern.objects.get(garment="overbust corset", size_label="10")
    url = reverse("fittings:client_detail", args=[client.pk])
    fitter_client.get(url)
    add_history(client, pattern, fitter_user, 2)
    from django.db import connection
    from django.test.utils import CaptureQueriesContext

    with CaptureQueriesContext(connection) as short:
        assert fitter_client.get(url).status_code == 200
    add_history(client, pattern, fitter_user, 8)
    with django_assert_num_queries(len(short)):
        assert fitter_client.get(url).status_code == 200
    assert len(short) <= 10


def test_it_reads_the_client_list_in_the_same_queries_however_many_clients(
    fitter_client, demo_atelier, django_assert_num_queries
):
    from django.db import connection
    from django.test.utils import CaptureQueriesContext

    url = reverse("fittings:client_list")
    with CaptureQueriesContext(connection) as few:
        fitter_client.get(url)
    Client.objects.bulk_create([Client(reference=f"X-{i}", name=f"Client {i}") for i in range(60)])
    with django_assert_num_queries(len(few)):
        fitter_client.get(url)


def test_it_searches_the_client_list_in_the_same_queries_however_many_clients_match(
    fitter_client, demo_atelier, django_assert_num_queries
):
    from django.db import connection
    from django.test.utils import CaptureQueriesContext

    url = reverse("fittings:client_list") + "?q=thorn"
    Client.objects.bulk_create([Client(reference=f"X-{i}", name=f"Ysolde Thornbury {i}") for i in range(3)])
    with CaptureQueriesContext(connection) as few:
        assert fitter_client.get(url, headers={"HX-Request": "true"}).text.count("Thornbury") == 3
    Client.objects.bulk_create([Client(reference=f"Y-{i}", name=f"Ysolde Thornbury {i}") for i in range(60)])
    with django_assert_num_queries(len(few)):
        assert fitter_client.get(url, headers={"HX-Request": "true"}).text.count("Thornbury") == 25


@pytest.mark.parametrize(
    "query, found",
    [
        ("ysolde", True),
        ("Marie", True),
        ("thornley", True),  # first name, middle name, surname after it
        ("VALE", True),
        ("ashdown-v", True),  # the part after a hyphen; the whole double-barrelled name
        ("ab-0042", True),
        ("0042", True),
        ("ysolde.t@", True),  # reference, its number, the contact from its start
        ("ornley", False),
        ("042", False),
        ("example.org", False),  # the middle of a word is not a start
    ],
)
def test_it_finds_a_client_by_the_start_of_any_word_of_the_name_or_the_reference(fitter_client, query, found):
    # Deliberate since the speed work: a search matches starts of words, which indexes serve; not any part.
    Client.objects.create(reference="AB-0042", name="Ysolde Marie Thornley", contact="ysolde.t@example.org")
    Client.objects.create(reference="AB-0043", name="Wenna Ashdown-Vale", contact="+44 20 7946 0043")
    Client.objects.create(reference="AB-0044", name="Nobody Else", contact="")
    html = fitter_client.get(reverse("fittings:client_list"), {"q": query}, headers={"HX-Request": "true"}).text
    expected = "AB-0043" if query.lower() in ("vale", "ashdown-v") else "AB-0042"
    assert (expected in html) is found
    assert "AB-0044" not in html


def test_it_lists_a_limited_number_of_matches_and_says_so(fitter_client, monkeypatch):
    from fittings import selectors

    monkeypatch.setattr(selectors, "MATCH_LIMIT", 4)
    Client.objects.bulk_create([Client(reference=f"Z-{i}", name=f"Tamsin Kestrel {i}") for i in range(6)])
    html = fitter_client.get(reverse("fittings:client_list"), {"q": "kest"}, headers={"HX-Request": "true"}).text
    assert html.count("Tamsin Kestrel") == 4
    assert "More than 4 clients match" in html
    html = fitter_client.get(reverse("fittings:client_list"), {"q": "kestrel 5"}, headers={"HX-Request": "true"}).text
    assert html.count("Tamsin Kestrel") == 1 and "More than" not in html


def test_it_compares_two_sessions_and_marks_the_differences(fitter_client, demo_atelier):
    client = Client.objects.get(reference="WF-0102")
    first, toile = client.sessions.order_by("taken_on")
    html = fitter_client.get(
        reverse("fittings:compare", args=[client.pk]) + f"?a=s{first.pk}&b=s{toile.pk}"
    ).content.decode()
    # Bust 39 1/2 -> 39 3/8 in, waist 32 -> 31 3/4 in; underbust unchanged.
    assert (
        '<tr class="differs"><th scope="row">Bust girth</th><td>39 1/2</td><td>39 3/8</td><td><strong>-1/8</strong>'
        in html
    )
    assert '<tr class=""><th scope="row">Underbust girth</th><td>33</td><td>33</td>' in html


def test_it_compares_two_revisions(fitter_client, fitter_user, demo_atelier):
    from patterns.models import BasePattern

    client = Client.objects.get(reference="WF-0102")
    first, toile = client.sessions.order_by("taken_on")
    pattern = BasePattern.objects.get(garment="overbust corset", size_label="12")
    a = plan_services.start_plan(client=client, session=first, pattern=pattern, garment="A", user=fitter_user)
    b = plan_services.start_plan(client=client, session=toile, pattern=pattern, garment="B", user=fitter_user)
    ra, rb = a.revisions.get(), b.revisions.get()
    response = fitter_client.get(reverse("fittings:compare", args=[client.pk]) + f"?a=r{ra.pk}&b=r{rb.pk}")
    html = response.content.decode()
    assert response.status_code == 200 and "Raw edges" in html and "Waist target" in html
    assert html.count('class="differs"') >= 2


@pytest.mark.parametrize("query", ["?a=s1&b=x", "?a=s999999&b=s1", "?a=r1&b=s1", "?a=s&b=s"])
def test_it_refuses_what_cannot_be_compared(fitter_client, demo_atelier, query):
    client = Client.objects.get(reference="WF-0102")
    response = fitter_client.get(reverse("fittings:compare", args=[client.pk]) + query)
    assert response.status_code == 400


def test_it_hides_another_clients_session_from_a_comparison(fitter_client, demo_atelier):
    mine = Client.objects.get(reference="WF-0102")
    other = MeasurementSession.objects.get(client__reference="WF-0101")
    response = fitter_client.get(reverse("fittings:compare", args=[mine.pk]) + f"?a=s{other.pk}&b=s{other.pk}")
    assert response.status_code == 400 and "not in this client" in response.content.decode()


def test_it_lets_only_editors_take_measurements(workroom_client, demo_atelier):
    client = Client.objects.get(reference="WF-0101")
    plans = Plan.objects.count()
    assert workroom_client.get(reverse("fittings:session_new", args=[client.pk])).status_code == 403
    assert workroom_client.post(reverse("fittings:client_new"), {"reference": "Z", "name": "Z"}).status_code == 403
    # Contacts and drafts are for fitters: the workroom has its queue of issued revisions.
    assert workroom_client.get(reverse("fittings:client_detail", args=[client.pk])).status_code == 403
    assert Plan.objects.count() == plans
