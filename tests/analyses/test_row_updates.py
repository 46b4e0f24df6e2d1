"""rows_update: many rows of one model, each with its own values, in one statement."""
from __future__ import annotations

import pytest
from django.db import connection, transaction
from django.test.utils import CaptureQueriesContext

from analyses.audit import PendingEntry, audit_append_many
from analyses.models import AuditAction, AuditEntry, Test
from analyses.models.immutable import ImmutableRowError
from analyses.row_updates import rows_update
from tests.factories import TestFactory

pytestmark = pytest.mark.django_db


def test_each_row_gets_its_own_values_nulls_and_json_included():
    first, second, untouched = TestFactory(), TestFactory(), TestFactory()
    first.value, first.value_exact, first.reported, first.duplicate_check = 0.5, "0.5", "0.50", None
    first.review_warnings = ["replicates differ by more than r", 'a "quoted" word']
    second.value, second.value_exact, second.reported = None, "", ""
    second.duplicate_check = {"within_r": True, "difference": "0.01"}
    second.review_warnings = []
    before_untouched = Test.objects.values().get(pk=untouched.pk)

    rows_update([first, second], ["value", "value_exact", "reported", "duplicate_check", "review_warnings"])

    stored = {row["id"]: row for row in Test.objects.values()}
    assert stored[first.pk]["value"] == 0.5 and stored[first.pk]["reported"] == "0.50"
    assert stored[first.pk]["duplicate_check"] is None
    assert stored[first.pk]["review_warnings"] == ["replicates differ by more than r", 'a "quoted" word']
    assert stored[second.pk]["value"] is None and stored[second.pk]["value_exact"] == ""
    assert stored[second.pk]["duplicate_check"] == {"within_r": True, "difference": "0.01"}
    assert stored[untouched.pk] == before_untouched


def test_postgresql_takes_one_statement_whatever_the_number_of_rows(postgres):
    tests = [TestFactory() for _ in range(12)]
    for number, test in enumerate(tests):
        test.reported = f"{number}.0"
    with CaptureQueriesContext(postgres) as captured:
        rows_update(tests, ["reported"])
    assert len(captured.captured_queries) == 1
    assert "FROM (VALUES" in captured.captured_queries[0]["sql"]
    assert sorted(Test.objects.values_list("reported", flat=True)) == sorted(f"{n}.0" for n in range(12))


def test_append_only_rows_are_refused():
    test = TestFactory()
    with transaction.atomic():
        [entry] = audit_append_many([PendingEntry(None, AuditAction.CHANGE, test, {"reported": ["", "1"]})])
    with pytest.raises(ImmutableRowError):
        rows_update([entry], ["reason"])
    assert AuditEntry.objects.get(pk=entry.pk).reason == entry.reason


def test_unsaved_rows_are_refused():
    with pytest.raises(ValueError, match="saved"):
        rows_update([Test(reported="1")], ["reported"])


def test_nothing_to_update_runs_no_query():
    with CaptureQueriesContext(connection) as captured:
        rows_update([], ["reported"])
    assert captured.captured_queries == []
