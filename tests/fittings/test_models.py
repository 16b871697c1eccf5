"""Clients, sessions, measurements and append-only plan revisions."""

from datetime import date, timedelta
from decimal import Decimal

import pytest
from django.core.exceptions import ValidationError
from django.db import IntegrityError, transaction
from django.db.models import ProtectedError
from django.utils import timezone

from fittings.models import (
    Client,
    Measurement,
    MeasurementSession,
    PinAdjustment,
    Plan,
    PlanRevision,
    RevisionLocked,
)
from fittings.selectors import client_timeline

pytestmark = pytest.mark.django_db

INPUTS = {
    "measurements": {"waist_girth": 742.0},
    "pattern": {"name": "Bodice", "size": "12"},
    "options": {"unit": "cm"},
}
RESULT = {"seams": [{"name": "Side seam", "waist": -4.5}], "findings": []}


@pytest.fixture
def hester():
    return Client.objects.create(reference="T-0001", name="Test Client")


@pytest.fixture
def session(hester):
    return MeasurementSession.objects.create(client=hester, kind="first", unit="cm")


@pytest.fixture
def plan(hester, session, bodice_pattern, fitter_user):
    return Plan.objects.create(
        client=hester, garment="Gala bodice", base_pattern=bodice_pattern, session=session, created_by=fitter_user
    )


@pytest.fixture
def draft(plan, fitter_user):
    return PlanRevision.objects.create(plan=plan, number=1, inputs=INPUTS, result=RESULT, author=fitter_user)


@pytest.fixture
def issued(draft, fitter_user):
    draft.status = "issued"
    draft.issued_by = fitter_user
    draft.save()
    return draft


# Measurements


@pytest.mark.parametrize("value", [Decimal("0"), Decimal("-12.5")])
def test_it_refuses_a_measurement_that_is_not_positive_in_the_database(session, value):
    with pytest.raises(IntegrityError), transaction.atomic():
        Measurement.objects.create(session=session, code="waist_girth", value_mm=value)
    assert session.measurements.count() == 0


def test_it_keeps_one_reading_per_code_and_session(session):
    Measurement.objects.create(session=session, code="waist_girth", value_mm=Decimal("742"))
    with pytest.raises(IntegrityError), transaction.atomic():
        Measurement.objects.create(session=session, code="waist_girth", value_mm=Decimal("745"))


def test_it_checks_a_reading_against_the_catalogue_limits(session):
    # Waist girth hard limits are 300-2500 mm (patterns/core/measures.py).
    with pytest.raises(ValidationError, match="between 30 and 250 cm"):
        Measurement(session=session, code="waist_girth", value_mm=Decimal("250")).full_clean()
    Measurement(session=session, code="waist_girth", value_mm=Decimal("742")).full_clean()


def test_it_refuses_an_unknown_unit_or_kind_in_the_database(hester):
    with pytest.raises(IntegrityError), transaction.atomic():
        MeasurementSession.objects.create(client=hester, unit="ft")
    with pytest.raises(IntegrityError), transaction.atomic():
        MeasurementSession.objects.create(client=hester, kind="party")


# Clients


def test_it_hides_deleted_clients_from_the_default_manager(hester):
    Client.objects.create(reference="T-0002", name="Gone", is_deleted=True, deleted_at=timezone.now())
    assert list(Client.objects.values_list("reference", flat=True)) == ["T-0001"]
    assert Client.all_objects.count() == 2


def test_it_keeps_the_deletion_flag_and_time_together(hester):
    with pytest.raises(IntegrityError), transaction.atomic():
        Client.objects.filter(pk=hester.pk).update(is_deleted=True)
    with pytest.raises(IntegrityError), transaction.atomic():
        Client.objects.create(reference="T-0003", name="Half", deleted_at=timezone.now())


def test_it_checks_references_against_deleted_clients_too(hester):
    Client.objects.filter(pk=hester.pk).update(is_deleted=True, deleted_at=timezone.now())
    with pytest.raises(ValidationError, match="(?i)reference already exists"):
        Client(reference="T-0001", name="Another").full_clean()


# Plans


def test_it_wants_the_plans_session_from_the_same_client(plan):
    other = Client.objects.create(reference="T-0009", name="Other")
    plan.session = MeasurementSession.objects.create(client=other)
    with pytest.raises(ValidationError, match="this client"):
        plan.full_clean()


def test_it_keeps_the_pattern_of_a_plan(plan, bodice_pattern):
    with pytest.raises(ProtectedError):
        bodice_pattern.delete()


# Plan revisions: append-only


def test_it_issues_a_draft_once(draft, fitter_user):
    draft.status = "issued"
    draft.issued_by = fitter_user
    draft.save()
    draft.refresh_from_db()
    assert draft.status == "issued"
    assert draft.issued_at is not None
    assert draft.issued_at <= timezone.now()


def test_it_refuses_to_issue_twice(issued):
    issued.issued_at = issued.issued_at + timedelta(days=1)
    with pytest.raises(RevisionLocked, match="was issued on"):
        issued.save()


def test_it_refuses_to_take_back_an_issue(issued):
    issued.status = "draft"
    issued.issued_at = None
    issued.issued_by = None
    with pytest.raises(RevisionLocked, match="was issued on"):
        issued.save()
    issued.refresh_from_db()
    assert issued.status == "issued"


@pytest.mark.parametrize(
    ("field", "value"),
    [("result", {"seams": []}), ("inputs", {**INPUTS, "options": {"unit": "in"}}), ("number", 7)],
)
def test_it_refuses_to_change_an_issued_revision(issued, field, value):
    setattr(issued, field, value)
    with pytest.raises(RevisionLocked, match=field):
        issued.save()
    issued.refresh_from_db()
    assert issued.result == RESULT
    assert issued.inputs == INPUTS
    assert issued.number == 1


def test_it_refuses_to_change_a_drafts_result_too(draft):
    draft.result = {"seams": [{"name": "Side seam", "waist": -9.0}]}
    with pytest.raises(RevisionLocked, match="Start a new revision"):
        draft.save()
    draft.refresh_from_db()
    assert draft.result == RESULT


def test_it_does_not_mistake_a_tuple_for_a_change(draft):
    draft.result = {"seams": ({"name": "Side seam", "waist": -4.5},), "findings": ()}
    draft.save()
    draft.refresh_from_db()
    assert draft.result == RESULT


def test_it_refuses_to_delete_a_revision(issued, draft):
    with pytest.raises(RevisionLocked):
        issued.delete()
    with pytest.raises(RevisionLocked):
        PlanRevision.objects.filter(pk=issued.pk).delete()
    with pytest.raises(RevisionLocked):
        PlanRevision.objects.filter(pk=issued.pk).update(result={})
    with pytest.raises(ProtectedError):
        issued.plan.delete()
    assert PlanRevision.objects.count() == 1


def test_it_refuses_an_issued_row_without_issue_time_in_the_database(plan):
    with pytest.raises(IntegrityError), transaction.atomic():
        PlanRevision.objects.create(plan=plan, number=1, inputs=INPUTS, result=RESULT, status="issued")


def test_it_refuses_a_draft_with_an_issue_time_in_the_database(plan):
    with pytest.raises(IntegrityError), transaction.atomic():
        PlanRevision.objects.create(plan=plan, number=1, inputs=INPUTS, result=RESULT, issued_at=timezone.now())


def test_it_numbers_revisions_once_per_plan(draft):
    with pytest.raises(IntegrityError), transaction.atomic():
        PlanRevision.objects.create(plan=draft.plan, number=1, inputs=INPUTS, result=RESULT)
    second = PlanRevision.objects.create(plan=draft.plan, number=2, based_on=draft, inputs=INPUTS, result=RESULT)
    assert list(draft.followed_by.all()) == [second]


def test_it_keeps_the_sign_of_a_pin(issued, fitter_user):
    PinAdjustment.objects.create(
        revision=issued, seam="Side seam", level="waist", amount_mm=Decimal("-6"), created_by=fitter_user
    )
    PinAdjustment.objects.create(revision=issued, seam="Side seam", level="hip", amount_mm=Decimal("3.175"))
    assert sorted(issued.pins.values_list("amount_mm", flat=True)) == [Decimal("-6.0000"), Decimal("3.1750")]


# History


def add_history(client_obj, pattern, user, sessions=2, plans=2):
    for n in range(sessions):
        session = MeasurementSession.objects.create(
            client=client_obj, taken_on=date(2025, 1, 1) + timedelta(days=n), measured_by=user
        )
        Measurement.objects.bulk_create(
            Measurement(session=session, code=code, value_mm=Decimal(value))
            for code, value in (("waist_girth", "742"), ("hip_girth", "1008"), ("bust_girth", "955"))
        )
    for n in range(plans):
        plan = Plan.objects.create(
            client=client_obj, garment=f"Bodice {n}", base_pattern=pattern, session=session, created_by=user
        )
        first = PlanRevision.objects.create(plan=plan, number=1, inputs=INPUTS, result=RESULT, author=user)
        PlanRevision.objects.create(plan=plan, number=2, based_on=first, inputs=INPUTS, result=RESULT, author=user)
        PinAdjustment.objects.create(revision=first, seam="Side seam", level="waist", amount_mm=Decimal("-4"))


def read_everything(timeline):
    return [
        (item.obj.measured_by.username, item.obj.measure_count, item.obj.photo_count)
        if item.kind == "session"
        else (item.obj.base_pattern.name, item.obj.session.taken_on, [r.number for r in item.obj.revisions.all()])
        for item in timeline
    ]


def test_it_lists_a_clients_history_in_one_query_per_table(
    hester, bodice_pattern, fitter_user, django_assert_num_queries
):
    add_history(hester, bodice_pattern, fitter_user, sessions=2, plans=2)
    # sessions (with their counts of readings and photos), plans, revisions
    with django_assert_num_queries(3):
        timeline = client_timeline(hester)
        read_everything(timeline)
    sessions = [item.obj for item in timeline if item.kind == "session"]
    plans = [item.obj for item in timeline if item.kind == "plan"]
    assert [s.measure_count for s in sessions] == [3, 3]
    assert [s.taken_on for s in sessions] == [date(2025, 1, 2), date(2025, 1, 1)]
    assert [sorted(r.number for r in p.revisions.all()) for p in plans] == [[1, 2], [1, 2]]


def test_it_needs_no_more_queries_for_a_longer_history(hester, bodice_pattern, fitter_user, django_assert_num_queries):
    add_history(hester, bodice_pattern, fitter_user, sessions=7, plans=5)
    with django_assert_num_queries(3):
        timeline = client_timeline(hester)
        read_everything(timeline)
    assert [item.kind for item in timeline].count("session") == 7
    assert [item.kind for item in timeline].count("plan") == 5


def test_it_keeps_other_clients_out_of_the_history(hester, bodice_pattern, fitter_user):
    other = Client.objects.create(reference="T-0100", name="Someone Else")
    add_history(other, bodice_pattern, fitter_user)
    assert client_timeline(hester) == []
