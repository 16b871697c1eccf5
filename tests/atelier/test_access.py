"""Every page but the login needs a signed-in member of staff."""

import itertools
from urllib.parse import urlsplit

import pytest
from django.urls import URLResolver, get_resolver, resolve, reverse
from django.urls.exceptions import Resolver404
from django.utils.regex_helper import normalize

# The only views open to anyone.
SIGN_IN_VIEWS = {"login", "admin:login"}
DUMMY_VALUES = ("1", "x", "auth", "x/y")


def _strip(regex):
    return regex.removeprefix("^").removesuffix(r"\Z").removesuffix("$")


def leaf_patterns(patterns=None, prefix="", namespaces=()):
    """(full regex, view name) for every URL pattern, namespaces included."""
    for pattern in get_resolver().url_patterns if patterns is None else patterns:
        regex = prefix + _strip(pattern.pattern.regex.pattern)
        if isinstance(pattern, URLResolver):
            spaces = (*namespaces, pattern.namespace) if pattern.namespace else namespaces
            yield from leaf_patterns(pattern.url_patterns, regex, spaces)
        else:
            name = ":".join((*namespaces, pattern.name)) if pattern.name else None
            yield regex, name, pattern


def example_url(regex, pattern):
    """A path that resolves to ``pattern``, with made-up arguments."""
    for template, params in normalize(regex):
        for values in itertools.product(DUMMY_VALUES, repeat=len(params)):
            path = "/" + template % dict(zip(params, values))
            try:
                match = resolve(path)
            except Resolver404:
                continue
            if match.func is pattern.callback or match.url_name == pattern.name:
                return path
    return None


def all_urls():
    urls = []
    for regex, name, pattern in leaf_patterns():
        urls.append((name or regex, example_url(regex, pattern)))
    return urls


def test_it_finds_the_apps_pages_when_walking_the_urls():
    names = {name for name, _ in all_urls()}
    assert {"login", "logout", "fittings:client_list", "fittings:photo_file", "admin:index"} <= names


@pytest.mark.django_db
@pytest.mark.parametrize(("name", "url"), [item for item in all_urls() if item[0] not in SIGN_IN_VIEWS])
def test_it_sends_anonymous_visitors_to_the_login(client, name, url):
    assert url is not None, f"No example URL could be built for {name}; extend DUMMY_VALUES."
    response = client.get(url)
    assert response.status_code == 302, f"{name} ({url}) answered {response.status_code}"
    location = urlsplit(response["Location"])
    # The admin's own pages send visitors to the admin's sign-in form.
    assert location.path in (reverse("login"), reverse("admin:login")), (
        f"{name} ({url}) redirects to {response['Location']}"
    )


@pytest.mark.django_db
@pytest.mark.parametrize("name", sorted(SIGN_IN_VIEWS))
def test_it_shows_the_sign_in_pages_to_anyone(client, name):
    response = client.get(reverse(name))
    assert response.status_code == 200
