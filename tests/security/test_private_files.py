"""Photos: no public address, checked by their content on upload, stored without metadata."""

import io
import struct
import zlib

import pytest
from django.conf import settings
from django.urls import URLResolver, get_resolver, reverse
from django.views.static import serve
from PIL import Image

from fittings.forms import MAX_PHOTO_PIXELS
from fittings.models import Client, MeasurementSession, Photo
from tests.security.conftest import jpeg_bytes, private_files

pytestmark = pytest.mark.django_db


def session_post(**values):
    return {"taken_on": "2026-11-30", "kind": "first", "unit": "cm", "bust_girth": "95", "done": "1", **values}


def upload(data: bytes, name="front.jpg"):
    f = io.BytesIO(data)
    f.name = name
    return f


def post_photo(fitter_client, data, name="front.jpg"):
    client = Client.objects.get(reference="WF-0101")
    return fitter_client.post(
        reverse("fittings:session_new", args=[client.pk]), session_post(photo_front=upload(data, name))
    )


def stored_bytes():
    photo = Photo.objects.get()
    with photo.image.open("rb") as f:
        return f.read()


def png_claiming(width, height) -> bytes:
    """A tiny PNG whose header claims ``width`` × ``height`` pixels (the pixel data is never reached).

    IHDR layout (width, height after the type) and its CRC-32 over type and data: PNG specification
    (ISO/IEC 15948), from memory; Pillow reading the claimed size back below confirms it.
    """
    out = io.BytesIO()
    Image.new("L", (1, 1)).save(out, format="PNG")
    data = bytearray(out.getvalue())
    ihdr = data.index(b"IHDR")
    data[ihdr + 4 : ihdr + 12] = struct.pack(">II", width, height)
    crc = zlib.crc32(bytes(data[ihdr : ihdr + 17]))
    data[ihdr + 17 : ihdr + 21] = struct.pack(">I", crc)
    return bytes(data)


# --- no public address ------------------------------------------------------------------------


def all_callbacks(patterns=None):
    for pattern in get_resolver().url_patterns if patterns is None else patterns:
        if isinstance(pattern, URLResolver):
            yield from all_callbacks(pattern.url_patterns)
        else:
            yield pattern.callback


def test_it_has_no_url_that_serves_files_from_a_folder():
    assert serve not in set(all_callbacks())
    assert settings.MEDIA_URL in ("", "/")
    data_dir = settings.DATA_DIR.resolve()
    static_root = settings.STATIC_ROOT.resolve()
    assert not static_root.is_relative_to(data_dir) and not data_dir.is_relative_to(static_root)


def test_it_serves_no_photo_by_its_file_name(client, fitter_client, demo_atelier):
    assert post_photo(fitter_client, jpeg_bytes()).status_code == 302
    name = Photo.objects.get().image.name
    content = stored_bytes()
    guesses = [
        f"/{name}",
        f"/private/{name}",
        f"/media/{name}",
        f"/data/private/{name}",
        f"/static/{name}",
        f"/static/../data/private/{name}",
        f"/static/%2e%2e/data/private/{name}",
    ]
    for url in guesses:
        for who in (client, fitter_client):
            response = who.get(url)
            body = b"".join(response.streaming_content) if response.streaming else response.content
            assert response.status_code in (302, 404), url
            assert content not in body, url


# --- checked by content, stored clean ---------------------------------------------------------


def test_it_stores_no_exif_and_no_location_at_all(fitter_client, demo_atelier):
    # Tag numbers from the Exif standard (CIPA DC-008): 0x8825 GPS IFD, 0x010F make, 0x9003 date taken.
    exif = Image.Exif()
    exif[0x8825] = {1: "N", 2: (51.0, 30.0, 12.5), 3: "W", 4: (0.0, 7.0, 39.0)}  # GPS latitude and longitude
    exif[0x010F] = "Camera maker"
    exif[0x9003] = "2026:11:30 10:00:00"  # when it was taken
    sent = jpeg_bytes(exif=exif)
    assert b"Exif" in sent
    assert post_photo(fitter_client, sent).status_code == 302
    stored = stored_bytes()
    assert b"Exif" not in stored and b"Camera maker" not in stored
    with Image.open(io.BytesIO(stored)) as image:
        assert dict(image.getexif()) == {}
        assert image.info.get("exif") is None


def test_it_turns_a_photo_upright_before_dropping_its_orientation_tag(fitter_client, demo_atelier):
    exif = Image.Exif()
    exif[0x0112] = 6  # Exif (CIPA DC-008) orientation 6: rotate 90° clockwise to view
    assert post_photo(fitter_client, jpeg_bytes(size=(40, 30), exif=exif)).status_code == 302
    with Image.open(io.BytesIO(stored_bytes())) as image:
        assert image.size == (30, 40)


def test_it_drops_text_chunks_from_a_png(fitter_client, demo_atelier):
    from PIL import PngImagePlugin

    info = PngImagePlugin.PngInfo()
    info.add_text("Location", "51.5N 0.12W, 14 Rue Example")
    out = io.BytesIO()
    Image.new("RGB", (20, 20), (10, 20, 30)).save(out, format="PNG", pnginfo=info)
    assert post_photo(fitter_client, out.getvalue(), "front.png").status_code == 302
    stored = stored_bytes()
    assert b"Rue Example" not in stored
    assert stored[:3] == b"\xff\xd8\xff"  # re-encoded as JPEG
    assert Photo.objects.get().image.name.endswith(".jpg")


def test_it_keeps_only_the_pixels_of_a_picture_with_something_appended(fitter_client, demo_atelier):
    payload = b"<?php system($_GET['c']); ?>"
    assert post_photo(fitter_client, jpeg_bytes() + payload).status_code == 302
    assert payload not in stored_bytes()


@pytest.mark.parametrize(
    "data, name, words",
    [
        (png_claiming(10_000, 6_000), "front.png", "too many pixels"),  # 60 million: over MAX_PHOTO_PIXELS
        (png_claiming(20_000, 20_000), "front.png", "too many pixels"),  # 400 million: Pillow's own bomb limit
        (jpeg_bytes(size=(400, 300))[:300], "front.jpg", "not a photo that can be read"),  # cut off
        (b"GIF89a" + b"\x00" * 64, "front.gif", "not a photo that can be read"),
        (b'<svg xmlns="http://www.w3.org/2000/svg"><script>alert(1)</script></svg>', "front.svg", "not a photo"),
    ],
)
def test_it_refuses_pictures_that_cannot_be_decoded_safely(fitter_client, demo_atelier, data, name, words):
    before = MeasurementSession.objects.count()
    response = post_photo(fitter_client, data, name)
    assert response.status_code == 400
    assert words in response.text
    assert MeasurementSession.objects.count() == before and Photo.objects.count() == 0
    assert private_files() == {}


def test_it_refuses_a_real_gif_which_no_tablet_camera_sends(fitter_client, demo_atelier):
    out = io.BytesIO()
    Image.new("P", (10, 10)).save(out, format="GIF")
    response = post_photo(fitter_client, out.getvalue(), "front.gif")
    assert response.status_code == 400 and "JPEG, PNG or WebP" in response.text


def test_it_builds_the_oversized_pictures_it_claims():
    with Image.open(io.BytesIO(png_claiming(10_000, 6_000))) as image:
        assert image.size == (10_000, 6_000) and image.format == "PNG"


def test_it_sets_the_pixel_limit_below_pillows_own():
    assert MAX_PHOTO_PIXELS < Image.MAX_IMAGE_PIXELS


def test_it_refuses_a_request_too_large_before_reading_it(fitter_client, demo_atelier, settings):
    settings.ATELIER_MAX_REQUEST_BYTES = 1024 * 1024
    response = post_photo(fitter_client, jpeg_bytes() + b"\x00" * (2 * 1024 * 1024))
    assert response.status_code == 413
    assert "too large" in response.content.decode()
    assert Photo.objects.count() == 0 and private_files() == {}


def test_it_sizes_the_request_limit_for_three_full_photos():
    assert settings.ATELIER_MAX_REQUEST_BYTES >= 3 * 8 * 1024 * 1024
