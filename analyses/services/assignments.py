"""Assigning tests to analysts, in bulk and all-or-nothing."""
from __future__ import annotations

import datetime as dt
from collections.abc import Sequence

from django.contrib.auth import get_user_model
from django.db import transaction
from django.utils import timezone

from analyses.errors import Conflict, InvalidInput, NotAllowed
from analyses.models import Priority, Sample, Test, TestState
from analyses.roles import role_permits
from analyses.services.access import ID_MAX, Actor, refuse_raw_data_edit_by_qa, require_permission
from analyses.services.transitions import record_test_move, sample_require_workable, sample_sync

ASSIGNABLE_STATES = (TestState.PENDING, TestState.ASSIGNED, TestState.SENT_BACK)


def test_assign_bulk(
    actor: Actor,
    tests: Sequence[Test | int],
    *,
    assignee,
    priority: int | None = None,
    due_on: dt.date | None = None,
) -> list[Test]:
    """Assign (or reassign) every test in ``tests`` to ``assignee`` (a user or a user id),
    optionally setting priority and due date. All or nothing: any problem raises and no
    test changes; errors name the item (``tests.3``; an unknown test is InvalidInput there). Pending tests become assigned;
    assigned and sent-back tests keep their state under the new assignee. Samples still
    "received" move to "in_testing". ``due_on`` may not be in the past. Needs
    ``assign_test`` (lab manager, admin); the assignee must be an active user who may
    enter results and is not a QA reviewer (``refuse_raw_data_edit_by_qa``)."""
    require_permission(actor, "assign_test", "assign tests")
    if isinstance(tests, (str, bytes)) or not isinstance(tests, Sequence) or not tests:
        raise InvalidInput.for_field("tests", "give at least one test")
    if priority is not None and priority not in Priority.values:
        raise InvalidInput.for_field("priority", f"must be one of {', '.join(map(str, Priority.values))}")
    if due_on is not None and due_on < timezone.localdate():
        raise InvalidInput.for_field("due_on", "must not be in the past")
    user_model = get_user_model()
    if not isinstance(assignee, user_model):
        assignee = user_model.objects.filter(pk=assignee).first()
        if assignee is None:
            raise InvalidInput.for_field("assignee", "no such user")
    try:  # a QA reviewer never enters raw data, whatever other groups they are in
        refuse_raw_data_edit_by_qa(assignee)
    except NotAllowed as exc:
        raise InvalidInput.for_field("assignee", exc.detail) from None
    if not assignee.is_active or not role_permits(assignee, "record_result"):
        raise InvalidInput.for_field("assignee", f"{assignee.username} may not enter results")
    ids = [t.pk if isinstance(t, Test) else t for t in tests]
    for index, pk in enumerate(ids):
        if isinstance(pk, bool) or not isinstance(pk, int):
            raise InvalidInput.for_field(f"tests.{index}", "must be a test id")
    if len(set(ids)) != len(ids):
        raise InvalidInput.for_field("tests", "lists a test twice")
    possible = [pk for pk in ids if 0 < pk <= ID_MAX]  # others name no row (and overflow SQLite's integers)
    with transaction.atomic():
        # Lock order everywhere: lot, then sample, then test (no deadlocks on PostgreSQL).
        sample_ids = Test.objects.filter(pk__in=possible).values_list("sample_id", flat=True)
        samples = {s.pk: s for s in Sample.objects.select_for_update().filter(pk__in=sample_ids).order_by("pk")}
        found = {t.pk: t for t in Test.objects.select_for_update().filter(pk__in=possible).order_by("pk")}
        ordered: list[Test] = []
        for index, pk in enumerate(ids):
            test = found.get(pk)
            if test is None:  # an unknown id in the list is bad input, named by its position
                raise InvalidInput.for_field(f"tests.{index}", f"test {pk} not found")
            if test.state not in ASSIGNABLE_STATES:
                raise Conflict(f"tests.{index}: test {pk} is {test.state}; it cannot be assigned", missing=[f"tests.{index}"])
            try:
                sample_require_workable(samples[test.sample_id])
            except Conflict as exc:
                raise Conflict(f"tests.{index}: {exc.detail}", missing=[f"tests.{index}"]) from None
            ordered.append(test)
        now = timezone.now()
        for test in ordered:
            extra = {"assignee": [test.assignee_id, assignee.pk]}
            if priority is not None and priority != test.priority:
                extra["priority"] = [test.priority, priority]
                test.priority = priority
            if due_on is not None and due_on != test.due_on:
                extra["due_on"] = [test.due_on.isoformat(), due_on.isoformat()]
                test.due_on = due_on
            target = TestState.ASSIGNED if test.state == TestState.PENDING else test.state
            test.sample = samples[test.sample_id]
            record_test_move(actor, test, target, reason=f"assigned to {assignee.username}", extra=extra)
            test.assignee = assignee
            test.assigned_at = now
            test.save(update_fields=["state", "assignee", "assigned_at", "priority", "due_on"])
        for sample in samples.values():
            sample_sync(actor, sample, reason="tests assigned")
    return ordered


test_assign_bulk.__test__ = False  # a service, not a pytest test
