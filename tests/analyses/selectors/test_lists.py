"""Lists with a fixed number of queries, the audit trail of a lot or sample, certificates."""
from __future__ import annotations

import pytest

from analyses.errors import NotAllowed, NotFound
from analyses.models import AuditEntry
from analyses.selectors.audit import audit_trail_for
from analyses.selectors.certificates import certificate_for
from analyses.selectors.investigations import investigation_list
from analyses.selectors.lots import lot_list, lot_readiness
from analyses.selectors.results import result_history
from analyses.selectors.samples import sample_list
from analyses.services.lots import lot_release
from analyses.services.results import result_correct
from analyses.services.review import test_accept
from analyses.services.samples import sample_receive, sample_register
from tests.analyses.lab_setup import enter_passing
from tests.factories import SIGNING_PASSWORD, LotFactory, SampleFactory, TestFactory

pytestmark = pytest.mark.django_db


def test_list_queries_do_not_grow_with_the_page(django_assert_num_queries):
    def touch_samples():
        for s in sample_list():
            (s.lot.product.code, s.registered_by.username, [t.assignee for t in s.tests.all()])

    for _ in range(2):
        TestFactory(sample=SampleFactory())
    with django_assert_num_queries(2):  # samples, then their tests
        touch_samples()
    for _ in range(10):
        TestFactory(sample=SampleFactory())
    with django_assert_num_queries(2):
        touch_samples()
    LotFactory.create_batch(5)
    with django_assert_num_queries(1):
        for lot in lot_list():
            (lot.product.code, lot.created_by.username, lot.sample_count, lot.open_investigations)
    with django_assert_num_queries(1):
        list(investigation_list(state="open"))


def test_result_history_shows_superseded_versions(users, assigned_tests):
    test = enter_passing(users["analyst"], assigned_tests[:1])[0]
    first = test.results.get(replicate=1)
    result_correct(users["analyst"], first, inputs=first.inputs, reason="re-weighed")
    history = list(result_history(test))
    assert [(r.replicate, r.version, r.status) for r in history] == [
        (1, 1, "superseded"),
        (1, 2, "current"),
        (2, 1, "current"),
    ]


def test_qa_reads_the_trail_of_a_lot_or_a_sample(users, assigned_tests):
    sample = assigned_tests[0].sample
    lot = sample.lot
    other = sample_receive(users["manager"], sample_register(users["manager"], lot, label="L-100-B"), condition="ok", storage_place="x")
    trail = list(audit_trail_for(users["qa"], sample))
    assert trail[0].object_type == "analyses.sample" and trail[0].action == "create"
    assert {e.object_type for e in trail} >= {"analyses.sample", "analyses.test"}
    assert all(e.sample_ref == sample.pk for e in trail)
    lot_trail = audit_trail_for(users["qa"], lot)
    assert lot_trail.filter(sample_ref=other.pk).exists()
    assert lot_trail.filter(object_type="analyses.lot").exists()
    assert [e.sequence for e in lot_trail] == sorted(e.sequence for e in lot_trail)
    for role in ("analyst", "nobody"):
        with pytest.raises(NotAllowed):
            audit_trail_for(users[role], lot)
    assert audit_trail_for(users["manager"], sample).count() == len(trail)
    assert AuditEntry.objects.count() > lot_trail.count()  # the product and specification are not the lot's


def test_certificate_and_readiness(users, assigned_tests):
    lot = assigned_tests[0].sample.lot
    with pytest.raises(NotFound):
        certificate_for(lot)
    readiness = lot_readiness(lot)
    assert readiness["releasable"] is False and len(readiness["missing"]) == 2
    for test in enter_passing(users["analyst"], assigned_tests):
        test_accept(users["analyst2"], test)
    assert lot_readiness(lot) == {"lot": "L-100", "state": "open", "releasable": True, "missing": [], "warnings": []}
    lot_release(users["qa"], lot, password=SIGNING_PASSWORD)
    certificate = certificate_for(lot.pk)
    assert certificate["number"].startswith("MVO-") and certificate["issued_by"] == "qa"
    assert len(certificate["content_sha256"]) == 64
    assert lot_readiness(lot)["missing"] == ["lot L-100 is released"]
