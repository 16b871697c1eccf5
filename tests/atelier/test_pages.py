"""The sign-in page, the client list and the photo view, as a browser sees them."""

import re

import pytest
from django.core.files.uploadedfile import SimpleUploadedFile
from django.urls import reverse
from django.utils import timezone

from fittings.models import Client, MeasurementSession, Photo
from tests.conftest import DEMO_PASSWORD

pytestmark = pytest.mark.django_db

# A 1 x 1 pixel PNG.
PNG = bytes.fromhex(
    "89504e470d0a1a0a0000000d4948445200000001000000010806000000"
    "1f15c4890000000d49444154789c6360f8ffff3f0005fe02fea7d6a4f0000000"
    "0049454e44ae426082"
)
INLINE_SCRIPT = re.compile(r"<script(?![^>]*\bsrc=)[^>]*>", re.IGNORECASE)
INLINE_STYLE = re.compile(r"<style\b|\sstyle=", re.IGNORECASE)


def sign_in(client, username, password):
    return client.post(reverse("login"), {"username": username, "password": password})


def test_it_shows_the_sign_in_page_with_a_strict_content_policy(client):
    response = client.get(reverse("login"))
    assert response.status_code == 200
    assert b'name="username"' in response.content
    assert b'name="password"' in response.content
    policy = response["Content-Security-Policy"]
    assert "default-src 'self'" in policy
    assert "script-src 'self'" in policy
    assert "unsafe-inline" not in policy


def test_it_signs_the_demo_fitter_in_and_lists_the_demo_clients(client, demo_atelier):
    response = sign_in(client, "demo", DEMO_PASSWORD)
    assert response.status_code == 302
    assert response["Location"] == reverse("fittings:client_list")
    page = client.get(response["Location"])
    assert page.status_code == 200
    for reference, name in (
        ("WF-0101", "Hester Quayle"),
        ("WF-0102", "Odalys Brenneman"),
        ("WF-0103", "Marguerite Ashdown-Vale"),
    ):
        assert reference in page.text
        assert name in page.text


def test_it_refuses_a_wrong_password_plainly(client, fitter_user):
    response = sign_in(client, fitter_user.username, "not the password")
    assert response.status_code == 200
    assert "Please enter a correct username and password" in response.text
    assert "_auth_user_id" not in client.session


def test_it_refuses_an_account_without_a_role(client, make_user):
    user = make_user(None, password="a-long-test-password")
    response = sign_in(client, user.username, "a-long-test-password")
    assert response.status_code == 200
    assert "no role in the atelier" in response.text
    assert "_auth_user_id" not in client.session


def test_it_pauses_sign_in_after_five_wrong_passwords(client, fitter_user):
    # AXES_FAILURE_LIMIT = 5; the sixth try is refused even with the right password.
    for _ in range(5):
        sign_in(client, fitter_user.username, "wrong password")
    response = sign_in(client, fitter_user.username, "a-long-test-password")
    assert response.status_code == 429
    assert "Signing in is paused" in response.text
    assert "_auth_user_id" not in client.session


def test_it_signs_out_with_a_post(fitter_client):
    response = fitter_client.post(reverse("logout"))
    assert response.status_code == 302
    assert fitter_client.get(reverse("fittings:client_list")).status_code == 302


def test_it_lists_active_clients_only(fitter_client, demo_atelier):
    Client.objects.filter(reference="WF-0102").update(is_deleted=True, deleted_at=timezone.now())
    response = fitter_client.get(reverse("fittings:client_list"))
    assert "WF-0101" in response.text
    assert "WF-0102" not in response.text


def test_it_finds_clients_by_name_or_reference(fitter_client, demo_atelier):
    response = fitter_client.get(reverse("fittings:client_list"), {"q": "quayle"})
    assert "WF-0101" in response.text
    assert "WF-0103" not in response.text
    response = fitter_client.get(reverse("fittings:client_list"), {"q": "WF-0103"})
    assert "Marguerite Ashdown-Vale" in response.text
    assert "Hester" not in response.text


def test_it_says_so_when_nothing_matches(fitter_client, demo_atelier):
    response = fitter_client.get(reverse("fittings:client_list"), {"q": "nobody-by-this-name"})
    assert response.status_code == 200
    assert "No client matches" in response.text


def test_it_shows_25_clients_a_page(fitter_client):
    Client.objects.bulk_create(Client(reference=f"T-{i:03}", name=f"Client {i:03}") for i in range(30))
    first = fitter_client.get(reverse("fittings:client_list"))
    second = fitter_client.get(reverse("fittings:client_list"), {"page": 2})
    assert first.text.count('">T-') == 25
    assert second.text.count('">T-') == 5
    assert "Page 2 of 2" in second.text
    assert fitter_client.get(reverse("fittings:client_list"), {"page": "abc"}).status_code == 200


def test_it_answers_htmx_with_the_rows_only(fitter_client, demo_atelier):
    response = fitter_client.get(reverse("fittings:client_list"), {"q": "Odalys"}, headers={"HX-Request": "true"})
    assert response.status_code == 200
    assert "<html" not in response.text
    assert "WF-0102" in response.text


@pytest.mark.parametrize("url_name", ["login", "fittings:client_list"])
def test_it_serves_pages_without_inline_scripts_or_styles(fitter_client, demo_atelier, url_name):
    if url_name == "login":
        fitter_client.logout()
    response = fitter_client.get(reverse(url_name))
    assert response.status_code == 200
    assert not INLINE_SCRIPT.findall(response.text)
    assert not INLINE_STYLE.findall(response.text)
    assert "django_htmx/htmx-2.min.js" in response.text


def test_it_shows_the_atelier_name_and_role(fitter_client):
    response = fitter_client.get(reverse("fittings:client_list"))
    assert "Wrenfield Stays &amp; Bodices" in response.text
    assert "Fitter" in response.text


def test_it_forbids_the_list_to_a_signed_in_account_without_role(client, make_user):
    client.force_login(make_user(None))
    response = client.get(reverse("fittings:client_list"))
    assert response.status_code == 403
    assert "Not for your role" in response.text


def photo_for(client_obj):
    session = MeasurementSession.objects.create(client=client_obj)
    return Photo.objects.create(
        session=session,
        view="front",
        image=SimpleUploadedFile("Hester front.png", PNG, content_type="image/png"),
    )


def test_it_serves_a_photo_to_staff_only_through_the_view(fitter_client, demo_atelier, settings):
    photo = photo_for(Client.objects.get(reference="WF-0101"))
    assert photo.image.name.startswith("photos/")
    assert "Hester" not in photo.image.name
    assert (settings.MEDIA_ROOT / photo.image.name).exists()
    response = fitter_client.get(reverse("fittings:photo_file", args=[photo.pk]))
    assert response.status_code == 200
    assert response["Content-Type"] == "image/png"
    assert b"".join(response.streaming_content) == PNG
    with pytest.raises(ValueError, match="no public address"):
        photo.image.url


def test_it_hides_the_photos_of_a_deleted_client(fitter_client, demo_atelier):
    client_obj = Client.objects.get(reference="WF-0101")
    photo = photo_for(client_obj)
    Client.objects.filter(pk=client_obj.pk).update(is_deleted=True, deleted_at=timezone.now())
    assert fitter_client.get(reverse("fittings:photo_file", args=[photo.pk])).status_code == 404


def test_it_answers_404_for_a_missing_photo(fitter_client):
    response = fitter_client.get(reverse("fittings:photo_file", args=[999999]))
    assert response.status_code == 404
    assert "Not found" in response.text


def test_it_opens_the_admin_to_the_owner(client, django_user_model, demo_atelier):
    owner = django_user_model.objects.create_superuser("boss", password="a-long-test-password")
    client.force_login(owner)
    for url in (
        "/admin/",
        "/admin/fittings/client/",
        "/admin/patterns/basepattern/",
        "/admin/fittings/planrevision/",
        "/admin/fittings/measurementsession/",
        "/admin/fittings/photo/",
        "/admin/patterns/patternpanel/",
    ):
        assert client.get(url).status_code == 200, url
    pattern_id = demo_atelier.patterns[0].pk
    assert client.get(f"/admin/patterns/basepattern/{pattern_id}/change/").status_code == 200
