"""What stands between a lot and its release, and what release does to the rest.

Release waits for every release-critical test of the routine and QC-check samples
(accepted, in specification), for every open investigation, and for any result still
awaiting review, critical or not. Open non-critical tests that nobody has entered yet
are cancelled by the release (``lot_release``)."""
from __future__ import annotations

from django.db.models import Prefetch

from analyses.models import (
    RELEASABLE_VERDICTS,
    InvestigationState,
    Lot,
    Sample,
    SampleKind,
    SampleState,
    Test,
    TestState,
)

# Kinds whose tests decide release; retain samples are stored, stability pulls belong to studies.
RELEASE_KINDS = (SampleKind.ROUTINE, SampleKind.QC_CHECK)
HISTORY_TEST_STATES = (TestState.INVALIDATED, TestState.CANCELLED)


def release_samples(lot: Lot) -> list[Sample]:
    """The lot's routine and QC-check samples that are not cancelled, with their live tests."""
    live_tests = Test.objects.exclude(state__in=HISTORY_TEST_STATES).select_related("specification_line").order_by("id")
    return list(
        lot.samples.filter(kind__in=RELEASE_KINDS)
        .exclude(state=SampleState.CANCELLED)
        .prefetch_related(Prefetch("tests", queryset=live_tests, to_attr="live_tests"))
        .order_by("label")
    )


def release_warnings(lot: Lot) -> list[str]:
    """The review warnings of the lot's release tests, one line each, naming sample and test.
    They inform the decision and never block it."""
    return [
        f"sample {sample.label}: {test.method_code} test {test.pk}: {warning}"
        for sample in release_samples(lot)
        for test in sample.live_tests
        for warning in test.review_warnings or ()  # a conditional pass is one (review_warnings.py)
    ]


def release_blockers(lot: Lot) -> list[str]:
    """Every reason the lot cannot be released now, one line each; empty when it can."""
    missing: list[str] = []
    for investigation in lot.investigations.filter(state=InvestigationState.OPEN).select_related("test__sample"):
        missing.append(
            f"OOS investigation {investigation.pk} is open "
            f"(sample {investigation.test.sample.label}, {investigation.test.method_code})"
        )
    critical_tests = 0
    for sample in release_samples(lot):
        if sample.state == SampleState.REGISTERED:
            missing.append(f"sample {sample.label} has not been received")
        elif sample.state == SampleState.ON_HOLD:
            missing.append(f"sample {sample.label} is on hold: {sample.state_reason}")
        for test in sample.live_tests:
            if not test.specification_line.release_critical:
                if test.state == TestState.RESULT_ENTERED:  # a result nobody has reviewed yet
                    missing.append(f"sample {sample.label}: {test.method_code} test {test.pk} is result_entered, awaiting review")
                continue
            critical_tests += 1
            if test.state != TestState.ACCEPTED:
                missing.append(f"sample {sample.label}: {test.method_code} test {test.pk} is {test.state}, not accepted")
            elif test.verdict not in RELEASABLE_VERDICTS:
                missing.append(f"sample {sample.label}: {test.method_code} test {test.pk} is out of specification")
    if critical_tests == 0:
        missing.append(f"lot {lot.code} has no release-critical test")
    return missing
