"""Who may do what: every service against every role (the matrix of the issue).

lab manager: products, drafts, lots, register/receive/hold/cancel samples, assign work, review.
analyst: enter results for tests assigned to them; review others' results.
QA reviewer: approve specifications, hold samples, review, close investigations, release and
reject lots; never enter or correct results.
admin: everything but approving specifications and releasing or rejecting lots (only QA,
issue 3); the four-eyes rule still applies.
superuser (a Django superuser in no group, the seventh identity): what an admin may do, and
never the QA decisions (issue 8).
"""
from __future__ import annotations

from collections.abc import Callable

import pytest

from analyses.errors import InvalidInput, NotAllowed
from analyses.models import Investigation, Test
from analyses.services.assignments import test_assign_bulk
from analyses.services.investigations import investigation_close
from analyses.services.lots import lot_create, lot_reject, lot_release
from analyses.services.products import product_create
from analyses.services.results import result_correct, result_record
from analyses.services.review import test_accept, test_send_back
from analyses.services.samples import sample_cancel, sample_hold, sample_receive, sample_register
from analyses.services.specifications import specification_approve, specification_create
from tests.analyses.lab_setup import (
    AV_HIGH,
    AV_HIGH_TWIN,
    AV_LOW,
    AV_LOW_TWIN,
    PV_LOW,
    PV_LOW_TWIN,
    enter_duplicates,
    AV_TRACE,
)
from tests.factories import SIGNING_PASSWORD, UserFactory

pytestmark = pytest.mark.django_db

ROLES = ("manager", "analyst", "analyst2", "qa", "admin", "nobody", "superuser")


def _av(sample) -> Test:
    return Test.objects.get(sample=sample, method_code="av")


def _entered(users, assigned_tests) -> Test:
    """The AV test with both replicates entered by "analyst"."""
    av = next(t for t in assigned_tests if t.method_code == "av")
    return enter_duplicates(users["analyst"], av, AV_LOW, AV_LOW_TWIN)


def _oos(users, assigned_tests) -> Investigation:
    av = next(t for t in assigned_tests if t.method_code == "av")
    test_accept(users["analyst2"], enter_duplicates(users["analyst"], av, AV_HIGH, AV_HIGH_TWIN))
    return Investigation.objects.get(test=av)


def _releasable(users, assigned_tests):
    for test in assigned_tests:
        first, second = (AV_LOW, AV_LOW_TWIN) if test.method_code == "av" else (PV_LOW, PV_LOW_TWIN)
        test_accept(users["analyst2"], enter_duplicates(users["analyst"], test, first, second))
    return assigned_tests[0].sample.lot


# case name -> (set-up from fixtures, action(actor, prepared), roles allowed)
CASES: dict[str, tuple[Callable, Callable, set[str]]] = {
    "product_create": (
        lambda r: None,
        lambda actor, _: product_create(actor, code=f"X-{actor.username}", name="Test oil"),
        {"manager", "admin", "superuser"},
    ),
    "specification_create": (
        lambda r: r.getfixturevalue("product"),
        lambda actor, product: specification_create(
            actor, product, effective_from="2024-01-01", lines=[{"method": "av", "maximum": "0.6"}]
        ),
        {"manager", "qa", "admin", "superuser"},
    ),
    "specification_approve": (
        lambda r: specification_create(
            r.getfixturevalue("users")["manager"], r.getfixturevalue("product"),
            effective_from="2024-01-01", lines=[{"method": "av", "maximum": "0.6"}],
        ),
        specification_approve,
        {"qa"},
    ),
    "lot_create": (
        lambda r: r.getfixturevalue("product"),
        lambda actor, product: lot_create(actor, code=f"L-{actor.username}", product=product, origin="production"),
        {"manager", "admin", "superuser"},
    ),
    "sample_register": (lambda r: r.getfixturevalue("lot"), sample_register, {"manager", "admin", "superuser"}),
    "sample_receive": (
        lambda r: r.getfixturevalue("sample"),
        lambda actor, sample: sample_receive(actor, sample, condition="ok", storage_place="shelf 1"),
        {"manager", "admin", "superuser"},
    ),
    "sample_hold": (
        lambda r: r.getfixturevalue("received_sample"),
        lambda actor, sample: sample_hold(actor, sample, reason="label smudged"),
        {"manager", "qa", "admin", "superuser"},
    ),
    "sample_cancel": (
        lambda r: r.getfixturevalue("received_sample"),
        lambda actor, sample: sample_cancel(actor, sample, reason="container broken"),
        {"manager", "admin", "superuser"},
    ),
    "test_assign_bulk": (
        lambda r: (r.getfixturevalue("received_sample"), r.getfixturevalue("users")["analyst"]),
        lambda actor, prepared: test_assign_bulk(actor, [_av(prepared[0])], assignee=prepared[1]),
        {"manager", "admin", "superuser"},
    ),
    # the test is assigned to "analyst": analyst2 may not enter it, admin may enter any
    "result_record": (
        lambda r: r.getfixturevalue("assigned_tests"),
        lambda actor, tests: result_record(actor, tests[0], inputs=AV_LOW, **AV_TRACE),
        {"analyst", "admin", "superuser"},
    ),
    "result_correct": (
        lambda r: result_record(r.getfixturevalue("users")["analyst"], r.getfixturevalue("assigned_tests")[0], inputs=AV_LOW, **AV_TRACE),
        lambda actor, result: result_correct(actor, result, inputs=AV_LOW_TWIN, reason="typo in titre"),
        {"analyst", "admin", "superuser"},
    ),
    # "analyst" entered the results, so the four-eyes rule refuses them
    "test_accept": (
        lambda r: _entered(r.getfixturevalue("users"), r.getfixturevalue("assigned_tests")),
        test_accept,
        {"analyst2", "manager", "qa", "admin", "superuser"},
    ),
    "test_send_back": (
        lambda r: _entered(r.getfixturevalue("users"), r.getfixturevalue("assigned_tests")),
        lambda actor, test: test_send_back(actor, test, reason="check the blank"),
        {"analyst2", "manager", "qa", "admin", "superuser"},
    ),
    "investigation_close": (
        lambda r: _oos(r.getfixturevalue("users"), r.getfixturevalue("assigned_tests")),
        lambda actor, inv: investigation_close(actor, inv, conclusion="confirmed", findings="repeat agrees", password=SIGNING_PASSWORD),
        {"qa", "admin", "superuser"},
    ),
    "lot_release": (
        lambda r: _releasable(r.getfixturevalue("users"), r.getfixturevalue("assigned_tests")),
        lambda actor, lot: lot_release(actor, lot, password=SIGNING_PASSWORD),
        {"qa"},
    ),
    "lot_reject": (
        lambda r: r.getfixturevalue("lot"),
        lambda actor, lot: lot_reject(actor, lot, reason="supplier recall", password=SIGNING_PASSWORD),
        {"qa"},
    ),
}


@pytest.fixture
def identities(users) -> dict:
    """The role users, and a superuser in no group (as ``createsuperuser`` makes one)."""
    return {**users, "superuser": UserFactory(username="root", is_staff=True, is_superuser=True)}


@pytest.mark.parametrize("role", ROLES)
@pytest.mark.parametrize("case", sorted(CASES))
def test_permission_matrix(request, identities, case, role):
    prepare, act, allowed = CASES[case]
    prepared = prepare(request)
    actor = identities[role]
    if role in allowed:
        act(actor, prepared)  # no NotAllowed
    else:
        with pytest.raises(NotAllowed):
            act(actor, prepared)


def test_qa_may_not_enter_results_even_as_an_analyst_too(users, assigned_tests):
    """Segregation of duties: raw data are never entered by QA, whatever other group they hold."""
    from django.contrib.auth.models import Group

    qa = users["qa"]
    qa.groups.add(Group.objects.get(name="analyst"))
    qa = type(qa).objects.get(pk=qa.pk)  # drop the permission cache
    with pytest.raises(InvalidInput, match="QA reviewer"):  # not assignable either
        test_assign_bulk(users["manager"], [assigned_tests[0]], assignee=qa)
    # a test that reached them anyway (assigned before they joined QA) is still refused
    Test.objects.filter(pk=assigned_tests[0].pk).update(assignee=qa)
    with pytest.raises(NotAllowed, match="QA reviewer"):
        result_record(qa, assigned_tests[0], inputs=AV_LOW, **AV_TRACE)
    assert not assigned_tests[0].results.exists()


def test_the_superuser_flag_opens_no_qa_decision_and_no_raw_data_to_qa(users, assigned_tests, lot):
    """Issue 8: QA-only decisions are membership of the QA group, and so is the
    segregation of duties; the superuser flag changes neither."""
    root = UserFactory(username="root", is_superuser=True)
    with pytest.raises(NotAllowed, match="may not reject lots"):
        lot_reject(root, lot, reason="no QA decision for superusers", password=SIGNING_PASSWORD)
    qa_root = UserFactory(username="root-qa", is_superuser=True, roles=["qa_reviewer"])
    with pytest.raises(InvalidInput, match="QA reviewer"):
        test_assign_bulk(users["manager"], [assigned_tests[0]], assignee=qa_root)
    with pytest.raises(NotAllowed, match="QA reviewer"):
        result_record(qa_root, assigned_tests[0], inputs=AV_LOW)  # admins may enter any test, QA never
    assert not assigned_tests[0].results.exists()
    lot_reject(qa_root, lot, reason="a QA member decides as QA", password=SIGNING_PASSWORD)  # membership, not the flag, decides


def test_a_qa_reviewer_who_is_also_admin_still_may_not_enter_results(users, assigned_tests):
    both = UserFactory(username="qa-admin", roles=["qa_reviewer", "admin"])
    with pytest.raises(NotAllowed, match="QA reviewer"):
        result_record(both, assigned_tests[0], inputs=AV_LOW)
