"""Tests: one method on one sample, created from the specification at receipt.

pending -> assigned -> result_entered -> accepted; a reviewer may send a test back
(sent_back: the assignee enters new results). A lab-error conclusion invalidates an
accepted test and creates a retest (a new test with ``retest_of``); a cancelled sample
cancels its open tests.
"""
from __future__ import annotations

from django.conf import settings
from django.db import models


class TestState(models.TextChoices):
    __test__ = False

    PENDING = "pending", "Pending"
    ASSIGNED = "assigned", "Assigned"
    RESULT_ENTERED = "result_entered", "Result entered"
    ACCEPTED = "accepted", "Accepted"
    SENT_BACK = "sent_back", "Sent back for retest"
    INVALIDATED = "invalidated", "Invalidated (lab error)"
    CANCELLED = "cancelled", "Cancelled"


OPEN_TEST_STATES = (TestState.PENDING, TestState.ASSIGNED, TestState.RESULT_ENTERED, TestState.SENT_BACK)
WORKABLE_TEST_STATES = (TestState.ASSIGNED, TestState.SENT_BACK)  # an analyst may enter results


class Priority(models.IntegerChoices):
    URGENT = 1, "Urgent"
    HIGH = 2, "High"
    NORMAL = 3, "Normal"
    LOW = 4, "Low"


class Verdict(models.TextChoices):
    PASS = "pass", "Pass"
    OUT_OF_SPECIFICATION = "oos", "Out of specification"
    # ILAC G8:09/2019 non-binary statements, where a specification line uses them
    CONDITIONAL_PASS = "cpass", "Conditional pass (inside the limit, within U of it)"
    CONDITIONAL_FAIL = "cfail", "Conditional fail (outside the limit, within U of it)"


# a conditional fail is outside the limit: an OOS like any other; a conditional pass is not,
# and releases like a pass (shown in review and on readiness)
OOS_VERDICTS = (Verdict.OUT_OF_SPECIFICATION, Verdict.CONDITIONAL_FAIL)
RELEASABLE_VERDICTS = (Verdict.PASS, Verdict.CONDITIONAL_PASS)


class Test(models.Model):
    __test__ = False  # not a pytest test class

    sample = models.ForeignKey("analyses.Sample", on_delete=models.PROTECT, related_name="tests")
    specification_line = models.ForeignKey(
        "analyses.SpecificationLine", on_delete=models.PROTECT, related_name="tests"
    )
    method_code = models.CharField(max_length=40)
    replicates = models.PositiveSmallIntegerField(default=2)
    priority = models.PositiveSmallIntegerField(choices=Priority.choices, default=Priority.NORMAL)
    due_on = models.DateField()
    state = models.CharField(max_length=20, choices=TestState.choices, default=TestState.PENDING)
    assignee = models.ForeignKey(
        settings.AUTH_USER_MODEL, null=True, blank=True, on_delete=models.PROTECT, related_name="assigned_tests"
    )
    assigned_at = models.DateTimeField(null=True, blank=True)
    retest_of = models.ForeignKey("self", null=True, blank=True, on_delete=models.PROTECT, related_name="retests")
    # Set when every replicate has a current result (and cleared by send-back / correction).
    value = models.FloatField(null=True, blank=True, help_text="mean of the replicates, unrounded")
    value_exact = models.TextField(
        blank=True, help_text="the mean in exact decimal arithmetic, as a Decimal string; the verdict is decided on it"
    )
    reported = models.CharField(max_length=40, blank=True, help_text="ASTM E29 rounded mean, Decimal string")
    unit = models.CharField(max_length=40, blank=True)
    verdict = models.CharField(max_length=8, choices=Verdict.choices, blank=True)
    duplicate_check = models.JSONField(null=True, blank=True)
    review_warnings = models.JSONField(
        default=list, blank=True,
        help_text="What the reviewer should weigh (result outside the method's scope, blank not run); never a block",
    )
    reviewed_by = models.ForeignKey(
        settings.AUTH_USER_MODEL, null=True, blank=True, on_delete=models.PROTECT, related_name="+"
    )
    reviewed_at = models.DateTimeField(null=True, blank=True)
    review_note = models.TextField(blank=True)
    created_at = models.DateTimeField()

    class Meta:
        ordering = ["priority", "due_on", "id"]
        indexes = [
            models.Index(fields=["method_code", "state"], name="test_queue_idx"),
            models.Index(fields=["assignee", "state"], name="test_assignee_idx"),
            # the order of the test list and of the queues (priority, due date, age): a page
            # without sorting the whole table, all tests or those in one state (the review queue)
            models.Index(fields=["priority", "due_on", "id"], name="test_order_idx"),
            models.Index(fields=["state", "priority", "due_on", "id"], name="test_state_order_idx"),
            # the work queues' order over the open tests only (a few percent of a lab's history):
            # walking test_order_idx for them skips every closed test of the earlier priorities
            models.Index(
                fields=["method_code", "priority", "due_on", "id"], condition=models.Q(state__in=OPEN_TEST_STATES),
                name="test_open_method_order_idx",
            ),
            models.Index(
                fields=["assignee", "priority", "due_on", "id"], condition=models.Q(state__in=WORKABLE_TEST_STATES),
                name="test_workable_order_idx",
            ),
        ]
        permissions = [
            ("assign_test", "Can assign tests to analysts"),
            ("review_test", "Can accept tests or send them back"),
            ("record_result", "Can enter results for tests assigned to them"),
            ("record_any_result", "Can enter results for any test (admin)"),
        ]

    def __str__(self) -> str:
        return f"{self.method_code} on {self.sample_id} (#{self.pk})"
