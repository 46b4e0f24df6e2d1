"""Tests: the filtered list and the work queues (one per method, each analyst's own, review),
and the tests result entry locks;
tests ordered by priority, then due date, each annotated ``is_overdue`` (open, due before
today, and its sample not on hold: a held test waits on purpose, and shows its hold instead)."""
from __future__ import annotations

import datetime as dt
from collections.abc import Collection, Sequence
from functools import lru_cache

from django.contrib.auth import get_user_model
from django.db import connections, router
from django.db.models import BooleanField, Exists, ExpressionWrapper, OuterRef, Q, QuerySet, Subquery
from django.utils import timezone

from analyses.models import (
    OPEN_TEST_STATES,
    WORKABLE_TEST_STATES,
    Result,
    ResultStatus,
    Sample,
    SampleState,
    SpecificationLine,
    Test,
    TestState,
    TestUncertainty,
)
from analyses.selectors.rows import RowReader, lock_needs_transaction, relation_keep, select_list

# everything a queue row shows, in one query (retest_of is shown by id only: no join)
TEST_RELATIONS = ("sample__lot__product", "assignee", "specification_line")


def tests_with_overdue(today: dt.date | None = None) -> QuerySet[Test]:
    today = today or timezone.localdate()
    # the hold is asked with EXISTS, not through a join on the sample: a join the annotation
    # makes stays in every COUNT(*) of the list (Django drops the annotation, not its join),
    # and joining 300,000 tests to their samples only to count them was most of a page's time
    held = Exists(Sample.objects.filter(pk=OuterRef("sample_id"), state=SampleState.ON_HOLD))
    overdue = Q(due_on__lt=today) & Q(state__in=OPEN_TEST_STATES) & ~Q(held)
    return Test.objects.select_related(*TEST_RELATIONS).annotate(
        is_overdue=ExpressionWrapper(overdue, output_field=BooleanField())
    )


def with_usernames(tests: QuerySet[Test]) -> QuerySet[Test]:
    """``tests`` with ``assignee_username`` and ``reviewed_by_username``, each a subquery on the
    user's primary key. A list read as rows takes them instead of joining the user table twice:
    PostgreSQL took about 10 ms to plan a page of tests with both joins, 1.5 ms without."""
    users = get_user_model().objects
    return tests.annotate(
        assignee_username=Subquery(users.filter(pk=OuterRef("assignee_id")).values("username")[:1]),
        reviewed_by_username=Subquery(users.filter(pk=OuterRef("reviewed_by_id")).values("username")[:1]),
    )


def work_queue(method_code: str, *, on_hold: bool | None = None, today: dt.date | None = None) -> QuerySet[Test]:
    """Open tests of one method (pending, assigned, sent back, entered and awaiting review),
    by priority (1 = urgent first), then due date, then age. ``on_hold`` True keeps only the
    tests whose sample is on hold, False leaves them out, None keeps both."""
    queryset = tests_with_overdue(today).filter(method_code=method_code, state__in=OPEN_TEST_STATES)
    if on_hold is not None:
        held = Q(sample__state=SampleState.ON_HOLD)
        queryset = queryset.filter(held) if on_hold else queryset.exclude(held)
    return queryset.order_by("priority", "due_on", "id")


def my_queue(user, *, today: dt.date | None = None) -> QuerySet[Test]:
    """The tests on which ``user`` has results to enter (assigned or sent back to them)."""
    return tests_with_overdue(today).filter(assignee=user, state__in=WORKABLE_TEST_STATES).order_by(
        "priority", "due_on", "id"
    )


def review_queue(*, exclude_entered_by=None, today: dt.date | None = None) -> QuerySet[Test]:
    """Tests with all results entered, awaiting review; with ``exclude_entered_by`` the ones
    that user may review under the four-eyes rule."""
    queryset = tests_with_overdue(today).filter(state=TestState.RESULT_ENTERED)
    if exclude_entered_by is not None:
        # one row must be both current and theirs (exclude() across the relation would not say that).
        # test__state repeats the outer filter (the row's test is the outer test): it changes no
        # answer, but tells the planner that only results of tests awaiting review can exclude a
        # row. Without it PostgreSQL weighs every current result of the user (half the table),
        # expects almost no test to be left, and sorts the whole queue instead of reading its
        # first page from test_state_order_idx.
        mine = Result.objects.filter(
            test=OuterRef("pk"), test__state=TestState.RESULT_ENTERED, status=ResultStatus.CURRENT,
            entered_by=exclude_entered_by,
        )
        queryset = queryset.exclude(Exists(mine))
    return queryset.order_by("priority", "due_on", "id")


def review_queue_count(user) -> int:
    """How many tests ``review_queue(exclude_entered_by=user)`` holds, counted without what
    only its page needs: no annotations, and no repeat of the test's state inside the four-eyes
    check (it steers the page's plan; in a count it makes every waiting test with a result of
    the user's cost a second probe). About a quarter faster than counting the queue itself at
    100,000 samples (issue 12)."""
    mine = Result.objects.filter(test=OuterRef("pk"), status=ResultStatus.CURRENT, entered_by=user)
    return Test.objects.filter(state=TestState.RESULT_ENTERED).exclude(Exists(mine)).count()


def test_list(
    *,
    sample=None,
    lot=None,
    state: str | None = None,
    method_code: str | None = None,
    assignee=None,
    overdue: bool | None = None,
    today: dt.date | None = None,
) -> QuerySet[Test]:
    """Tests filtered by any of sample, lot, state, method, assignee and overdue."""
    queryset = tests_with_overdue(today)
    if sample is not None:
        queryset = queryset.filter(sample=sample)
    if lot is not None:
        queryset = queryset.filter(sample__lot=lot)
    if state:
        queryset = queryset.filter(state=state)
    if method_code:
        queryset = queryset.filter(method_code=method_code)
    if assignee is not None:
        queryset = queryset.filter(assignee=assignee)
    if overdue is not None:
        queryset = queryset.filter(is_overdue=overdue)
    return queryset.order_by("priority", "due_on", "id")


test_list.__test__ = False  # a selector, not a pytest test


# --- result entry's reads (issue 12): one text of SQL each on PostgreSQL ------------------
def tests_locked(test_ids: Collection[int]) -> list[Test]:
    """The tests ``test_ids``, their rows locked, by id, each with its specification line and its
    stored mean budget (kept as None when it has none): what
    ``Test.objects.select_for_update(of=("self",)).select_related("specification_line",
    "uncertainty")`` reads, in one text of SQL on PostgreSQL, whose compiling by Django took
    longer than the query (tests/analyses/selectors/test_tests.py holds the two equal)."""
    connection = connections[router.db_for_write(Test)]
    if connection.vendor != "postgresql":
        return list(
            Test.objects.select_for_update(of=("self",)).select_related("specification_line", "uncertainty")
            .filter(pk__in=test_ids).order_by("pk")
        )
    return _tests_with_lines(connection, _tests_locked_sql(), [list(test_ids)], budgets=True)


def tests_of_samples_locked(sample_ids: Collection[int], method_codes: Collection[str]) -> list[Test]:
    """The tests of these methods on these samples, locked with their specification lines, by
    id, each with its line: what ``Test.objects.select_for_update().select_related(
    "specification_line")`` reads, in one text of SQL on PostgreSQL."""
    connection = connections[router.db_for_write(Test)]
    if connection.vendor != "postgresql":
        return list(
            Test.objects.select_for_update().select_related("specification_line")
            .filter(sample_id__in=sample_ids, method_code__in=method_codes).order_by("pk")
        )
    return _tests_with_lines(connection, _tests_of_samples_sql(), [list(sample_ids), list(method_codes)], budgets=False)


def _tests_with_lines(connection, sql: str, params: Sequence, *, budgets: bool) -> list[Test]:
    lock_needs_transaction(connection)
    readers = [RowReader.of(model, connection) for model in (Test, SpecificationLine, TestUncertainty)]
    found = []
    with connection.cursor() as cursor:
        cursor.execute(sql, params)
        for row in cursor.fetchall():
            test, at = readers[0].read(row, 0)
            line, at = readers[1].read(row, at)
            relation_keep(test, "specification_line", line)
            if budgets:
                relation_keep(test, "uncertainty", readers[2].read(row, at)[0])
            found.append(test)
    return found


def _tables() -> tuple[str, str, str]:
    return tuple(model._meta.db_table for model in (Test, SpecificationLine, TestUncertainty))  # type: ignore[return-value]


@lru_cache(maxsize=1)
def _tests_locked_sql() -> str:
    test, line, budget = _tables()
    return (
        f"SELECT {select_list((Test, 't'), (SpecificationLine, 'l'), (TestUncertainty, 'u'))} "
        f'FROM "{test}" t JOIN "{line}" l ON l.id = t.specification_line_id '
        f'LEFT JOIN "{budget}" u ON u.test_id = t.id '
        "WHERE t.id = ANY(%s) ORDER BY t.id FOR UPDATE OF t"
    )


@lru_cache(maxsize=1)
def _tests_of_samples_sql() -> str:
    test, line, _ = _tables()
    # no OF: the lines are locked too, as select_for_update() locks every table it joins
    return (
        f"SELECT {select_list((Test, 't'), (SpecificationLine, 'l'))} "
        f'FROM "{test}" t JOIN "{line}" l ON l.id = t.specification_line_id '
        "WHERE t.sample_id = ANY(%s) AND t.method_code = ANY(%s) ORDER BY t.id FOR UPDATE"
    )
