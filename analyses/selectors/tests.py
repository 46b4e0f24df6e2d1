"""Tests: the filtered list and the work queues (one per method, each analyst's own, review);
tests ordered by priority, then due date, each annotated ``is_overdue`` (open, due before
today, and its sample not on hold: a held test waits on purpose, and shows its hold instead)."""
from __future__ import annotations

import datetime as dt

from django.contrib.auth import get_user_model
from django.db.models import BooleanField, Exists, ExpressionWrapper, OuterRef, Q, QuerySet, Subquery
from django.utils import timezone

from analyses.models import (
    OPEN_TEST_STATES,
    WORKABLE_TEST_STATES,
    Result,
    ResultStatus,
    Sample,
    SampleState,
    Test,
    TestState,
)

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
