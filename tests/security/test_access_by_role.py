"""Every URL the resolver knows, asked for by every role and by an anonymous visitor.

Roles (atelier/roles.py): the owner may do everything, a fitter works with
clients, sessions and plans, the workroom only reads plans and prints.  The
table below is the whole access policy in one place; a URL added without an
entry here fails ``test_it_has_an_expectation_for_every_url``.
"""

from dataclasses import dataclass, field
from urllib.parse import urlsplit

import pytest
from django.urls import URLResolver, get_resolver, reverse

from atelier.roles import FITTER, OWNER, WORKROOM
from fittings.models import AuditEntry, Client, PlanRevision

pytestmark = pytest.mark.django_db

ANONYMOUS = "anonymous"
ACTORS = (ANONYMOUS, WORKROOM, FITTER, OWNER)
MISSING = 999_999  # an id no test object has


def leaf_patterns(patterns=None, namespaces=(), route=""):
    """(name with namespaces, pattern, whole route) for every named URL pattern; the route joins
    the parts of every include() above it, where an id may be captured."""
    for pattern in get_resolver().url_patterns if patterns is None else patterns:
        whole = route + str(pattern.pattern)
        if isinstance(pattern, URLResolver):
            spaces = (*namespaces, pattern.namespace) if pattern.namespace else namespaces
            yield from leaf_patterns(pattern.url_patterns, spaces, whole)
        elif pattern.name:
            yield ":".join((*namespaces, pattern.name)), pattern, whole


def url_names():
    return sorted({name for name, _, _ in leaf_patterns()})


def all_roles(status):
    return {WORKROOM: status, FITTER: status, OWNER: status}


def editors(status, workroom=403):
    return {WORKROOM: workroom, FITTER: status, OWNER: status}


READ = {"GET": all_roles(200)}
READ_ONLY = {"GET": all_roles(200), "POST": all_roles(405)}  # @require_GET
EDIT_PAGE = {"GET": editors(200), "POST": editors(400)}  # an empty form is refused
POST_ONLY = {"GET": all_roles(405)}  # @require_POST


@dataclass
class Rule:
    kwargs: object  # world -> URL kwargs
    methods: dict = field(default_factory=dict)  # method -> role -> status (anonymous always goes to the login)


C = lambda w: {"pk": w.client.pk}  # noqa: E731
CP = lambda w: {"client_pk": w.client.pk}  # noqa: E731
PLAN = lambda w: {"pk": w.plan.pk}  # noqa: E731
REV1 = lambda w: {"pk": w.plan.pk, "number": 1}  # noqa: E731
PATTERN = lambda w: {"pk": w.plan.base_pattern_id}  # noqa: E731

RULES = {
    # The workroom is sent to its queue of issued revisions: names, contacts and drafts are for fitters.
    "fittings:client_list": Rule(lambda w: {}, {"GET": editors(200, workroom=302)}),
    "fittings:workroom_queue": Rule(lambda w: {}, READ),
    "fittings:client_new": Rule(lambda w: {}, EDIT_PAGE),
    "fittings:client_detail": Rule(C, {"GET": editors(200)}),
    "fittings:client_edit": Rule(C, EDIT_PAGE),
    "fittings:client_delete": Rule(C, {**POST_ONLY, "POST": {WORKROOM: 403, FITTER: 403, OWNER: 302}}),
    "fittings:session_new": Rule(CP, EDIT_PAGE),
    "fittings:session_check": Rule(CP, {**POST_ONLY, "POST": editors(200)}),
    "fittings:session_convert": Rule(CP, {**POST_ONLY, "POST": editors(400)}),
    "fittings:compare": Rule(CP, {"GET": editors(200)}),
    "fittings:fitting_import": Rule(CP, EDIT_PAGE),
    "fittings:session_edit": Rule(lambda w: {"pk": w.session.pk}, EDIT_PAGE),
    "fittings:plan_new": Rule(lambda w: {"session_pk": w.session.pk}, EDIT_PAGE),
    # The workroom is sent to the plan's latest issued revision.
    "fittings:plan_edit": Rule(PLAN, {"GET": editors(200, workroom=302), "POST": editors(400)}),
    "fittings:plan_recompute": Rule(PLAN, {**POST_ONLY, "POST": editors(400)}),
    "fittings:plan_preview": Rule(PLAN, {"GET": editors(200), "POST": all_roles(405)}),
    "fittings:plan_checks": Rule(PLAN, {"GET": editors(200), "POST": all_roles(405)}),
    "fittings:revision_detail": Rule(REV1, READ),
    "fittings:revision_preview": Rule(REV1, READ_ONLY),
    "fittings:revision_checks": Rule(REV1, READ_ONLY),
    "fittings:revision_fitting_file": Rule(REV1, READ_ONLY),
    "fittings:revision_pieces_svg": Rule(REV1, READ_ONLY),
    "fittings:revision_pieces_dxf": Rule(REV1, READ_ONLY),
    # Base patterns as drawing files: any role downloads the pieces; owner and fitters import.
    "patterns:block_import": Rule(lambda w: {}, EDIT_PAGE),
    "patterns:pattern_files": Rule(lambda w: {"pk": w.plan.base_pattern_id}, READ_ONLY),
    "patterns:pattern_pieces_svg": Rule(lambda w: {"pk": w.plan.base_pattern_id}, READ_ONLY),
    "patterns:pattern_pieces_dxf": Rule(lambda w: {"pk": w.plan.base_pattern_id}, READ_ONLY),
    "fittings:revision_issue": Rule(lambda w: {"pk": w.plan.pk, "number": 2}, {**POST_ONLY, "POST": editors(302)}),
    "fittings:revision_pins": Rule(REV1, EDIT_PAGE),
    # A proof is drawn at once and issues nothing: for those who may change the plan.
    "fittings:revision_proof": Rule(
        lambda w: {"pk": w.plan.pk, "number": 2, "document": "work-order"},
        {"GET": editors(200), "POST": all_roles(405)},
    ),
    "fittings:revision_apply_pins": Rule(REV1, {**POST_ONLY, "POST": editors(302)}),
    # Photos of clients' bodies: fitters and the owner only.
    "fittings:photo_file": Rule(lambda w: {"pk": w.photo.pk}, {"GET": editors(200)}),
    "fittings:photo_replace": Rule(lambda w: {"pk": w.photo.pk}, {**POST_ONLY, "POST": editors(400)}),  # no file sent
    # The fitter deletes the photo; the owner, asking next for the same one, finds it gone.
    "fittings:photo_delete": Rule(
        lambda w: {"pk": w.photo.pk}, {**POST_ONLY, "POST": {WORKROOM: 403, FITTER: 302, OWNER: 404}}
    ),
    # Printing: the workroom prints issued revisions.
    "fittings:print_start": Rule(
        lambda w: {"plan_id": w.plan.pk, "number": 1}, {"GET": all_roles(200), "POST": all_roles(400)}
    ),
    "fittings:print_status": Rule(lambda w: {"job_id": w.job.pk}, READ),
    "fittings:print_download": Rule(lambda w: {"job_id": w.job.pk, "document": "work-order"}, READ),
    "fittings:print_large": Rule(lambda w: {"job_id": w.job.pk, "fmt": "roll-610"}, READ_ONLY),
    # The projector shows the pieces to everyone who may print them.
    "fittings:projector": Rule(lambda w: {"plan_id": w.plan.pk, "number": 1}, READ_ONLY),
    "fittings:projector_pieces": Rule(lambda w: {"plan_id": w.plan.pk, "number": 1}, READ_ONLY),
    # Fabric layouts: the workroom buys and cuts the fabric, so it may ask for one (the revision is not touched).
    "fittings:fabric_layout": Rule(REV1, READ_ONLY),
    "fittings:fabric_layout_start": Rule(REV1, {**POST_ONLY, "POST": all_roles(400)}),
    # Base patterns: everyone reads them; the owner and fitters type, edit and grade them.
    "patterns:pattern_list": Rule(lambda w: {}, READ),
    "patterns:pattern_detail": Rule(PATTERN, READ),
    "patterns:pattern_drawing": Rule(PATTERN, READ_ONLY),
    "patterns:block_new": Rule(lambda w: {}, EDIT_PAGE),
    "patterns:block_draw": Rule(lambda w: {}, {**POST_ONLY, "POST": editors(400)}),
    # A drawing made for the live form, found by its hash (none under this one).
    "patterns:block_drawing": Rule(lambda w: {"key": "0" * 64}, {"GET": editors(404), "POST": all_roles(405)}),
    "patterns:block_measure": Rule(lambda w: {}, EDIT_PAGE),
    "patterns:block_edit": Rule(PATTERN, EDIT_PAGE),
    "patterns:pattern_grade": Rule(PATTERN, EDIT_PAGE),
    # Signing in and out.
    "login": Rule(lambda w: {}, {"GET": all_roles(302)}),  # a signed-in member of staff is sent on
    "logout": Rule(lambda w: {}, {"GET": all_roles(405), "POST": all_roles(302)}),
}
# Writes the workroom may make: printing, fabric layouts, and signing itself out.
WORKROOM_WRITES = {"fittings:print_start", "fittings:fabric_layout_start", "logout"}
SIGN_IN = {"login", "admin:login"}
SIGN_OUT = {"logout", "admin:logout"}


def app_names():
    return [name for name in url_names() if not name.startswith("admin:")]


def test_it_has_an_expectation_for_every_url():
    missing = [name for name in app_names() if name not in RULES]
    assert missing == [], f"Add these URLs to RULES with the status each role must get: {missing}"


def test_it_lets_the_workroom_write_nothing_but_printing():
    for name, rule in RULES.items():
        if "POST" in rule.methods and name not in WORKROOM_WRITES:
            assert rule.methods["POST"][WORKROOM] in (403, 405), name


@pytest.fixture
def actors(client, make_user):
    """One signed-in test client per role (the anonymous one signed in as nobody)."""
    from django.test import Client as BrowserClient

    made = {ANONYMOUS: BrowserClient()}
    for role in (WORKROOM, FITTER, OWNER):
        made[role] = BrowserClient()
        made[role].force_login(make_user(role))
    return made


def _request(client, method, url):
    return client.get(url) if method == "GET" else client.post(url, {})


def _assert_sent_to_login(response, label):
    assert response.status_code == 302, f"{label}: anonymous got {response.status_code}"
    assert urlsplit(response["Location"]).path in (reverse("login"), reverse("admin:login")), label


@pytest.mark.parametrize("name", [n for n in app_names() if n in RULES])
def test_it_gives_each_role_the_expected_answer(name, world, actors):
    rule = RULES[name]
    url = reverse(name, kwargs=rule.kwargs(world))
    for method, expected in rule.methods.items():
        if name not in SIGN_IN:
            _assert_sent_to_login(_request(actors[ANONYMOUS], method, url), f"{method} {url}")
        for role in (WORKROOM, FITTER, OWNER):
            response = _request(actors[role], method, url)
            assert response.status_code == expected[role], (
                f"{method} {url} as {role}: {response.status_code}, expected {expected[role]}"
            )


def _with_missing_ids(kwargs):
    return {key: MISSING if isinstance(value, int) else value for key, value in kwargs.items()}


def names_with_ids():
    return sorted({name for name, _, route in leaf_patterns() if name in RULES and "<int:" in route})


def test_it_finds_an_id_in_every_route_that_captures_one_through_an_include():
    # Every fittings route below a client, session, plan, revision, photo or print job takes an id,
    # captured by the include() above it; losing them here would leave them unchecked below.
    names = names_with_ids()
    assert {
        "fittings:revision_detail",
        "fittings:photo_file",
        "fittings:print_status",
        "patterns:pattern_detail",
    } <= set(names)
    assert len(names) >= 40


@pytest.mark.parametrize("name", names_with_ids())
def test_it_answers_404_for_ids_that_do_not_exist_and_still_refuses_the_wrong_role(name, world, actors):
    rule = RULES[name]
    url = reverse(name, kwargs=_with_missing_ids(rule.kwargs(world)))
    for method, expected in rule.methods.items():
        _assert_sent_to_login(_request(actors[ANONYMOUS], method, url), f"{method} {url}")
        for role in (WORKROOM, FITTER, OWNER):
            allowed = expected[role] not in (403, 405)
            response = _request(actors[role], method, url)
            if allowed:
                assert response.status_code == 404, f"{method} {url} as {role}"
            elif rule.methods.get("GET", {}).get(role) in (200, 302) and response.status_code == 404:
                pass  # a role that may read this page may learn that it does not exist
            else:
                assert response.status_code == expected[role], f"{method} {url} as {role}"


def test_it_answers_404_for_a_revision_number_beyond_the_plans(world, actors):
    beyond = world.plan.revisions.count() + 1
    for name in (
        "fittings:revision_detail",
        "fittings:revision_preview",
        "fittings:revision_fitting_file",
        "fittings:revision_checks",
        "fittings:revision_pieces_svg",
        "fittings:revision_pieces_dxf",
    ):
        response = actors[WORKROOM].get(reverse(name, args=[world.plan.pk, beyond]))
        assert response.status_code == 404, name
    response = actors[FITTER].post(reverse("fittings:revision_issue", args=[world.plan.pk, beyond]))
    assert response.status_code == 404
    assert PlanRevision.objects.filter(plan=world.plan).count() == beyond - 1


def test_it_keeps_the_workroom_from_every_write_and_changes_nothing(world, actors):
    before = (
        Client.all_objects.filter(is_deleted=False).count(),
        PlanRevision.objects.count(),
        AuditEntry.objects.count(),
    )
    for name, rule in RULES.items():
        if "POST" in rule.methods and name not in WORKROOM_WRITES:
            try:
                url = reverse(name, kwargs=rule.kwargs(world))
            except Exception:  # noqa: BLE001 - a URL not (yet) in the resolver
                continue
            assert actors[WORKROOM].post(url, {"reference": "Z-1", "name": "Z"}).status_code in (403, 405), name
    assert (
        Client.all_objects.filter(is_deleted=False).count(),
        PlanRevision.objects.count(),
        AuditEntry.objects.count(),
    ) == before


# --- the admin ------------------------------------------------------------------------------


def admin_example_urls():
    """One URL per admin pattern, with made-up ids (the admin sends non-staff away before looking)."""
    from django.utils.regex_helper import normalize

    urls = []
    for name, pattern, _ in leaf_patterns():
        if not name.startswith("admin:") or name in SIGN_IN | SIGN_OUT:
            continue
        template, params = normalize(pattern.pattern.regex.pattern.lstrip("^").rstrip("$").removesuffix(r"\Z"))[0]
        urls.append((name, "/admin/" + template % {p: "1" for p in params}))
    return urls


def test_it_keeps_every_role_but_staff_out_of_the_admin(world, actors):
    urls = admin_example_urls()
    assert len(urls) > 30
    for name, url in urls:
        for actor in ACTORS:
            response = actors[actor].get(url)
            if response.status_code == 404:  # e.g. an app list for an app label that does not exist
                continue
            _assert_sent_to_login(response, f"{url} as {actor}")


def test_it_shows_the_audit_trail_read_only_in_the_admin(client, django_user_model, world):
    boss = django_user_model.objects.create_superuser("boss", password="a-long-test-password")
    client.force_login(boss)
    entry = AuditEntry.objects.first()
    assert client.get("/admin/fittings/auditentry/").status_code == 200
    assert client.get(f"/admin/fittings/auditentry/{entry.pk}/change/").status_code == 200
    assert client.get("/admin/fittings/auditentry/add/").status_code == 403
    assert client.get(f"/admin/fittings/auditentry/{entry.pk}/delete/").status_code == 403
    response = client.post("/admin/fittings/auditentry/", {"action": "delete_selected", "_selected_action": [entry.pk]})
    assert AuditEntry.objects.filter(pk=entry.pk).exists()
    assert response.status_code in (200, 302)
