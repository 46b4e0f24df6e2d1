"""Stability pulls are judged against their study's acceptance limits, not the release
specification.

A test on a study's pull sample keeps its specification line (unit, method, turnaround),
but its verdict comes from the study attribute of its method: simple acceptance of the
exact value against the attribute's minimum and maximum, as the study's evaluation holds
its results against them (``stability_evaluation._beyond``, the same 15-digit reading of
the stored limits). A failed pull raises the study's ``pull_out_of_limit`` alert when it is
accepted, under the episode key the evaluation uses, so the alert is raised once; it never
opens an OOS investigation, which is about releasing a lot. A sample of kind
``stability_pull`` that belongs to no study is judged as any other sample.
"""
from __future__ import annotations

from decimal import Decimal

from analyses.models import AlertSource, Comparison, PullPoint, SampleKind, StudyAttribute, Test
from analyses.services.access import Actor
from analyses.services.alerts import AlertDraft, alerts_raise
from analyses.services.verdicts import line_verdict, verdict_for
from plugins.contract import float_as_decimal

_NOT_LOOKED_UP = object()


def study_attribute_of(test: Test) -> StudyAttribute | None:
    """The study attribute a pull test is judged against; None for a test that is not on a
    study's pull sample (looked up once per test object)."""
    cached = getattr(test, "_study_attribute", _NOT_LOOKED_UP)
    if cached is not _NOT_LOOKED_UP:
        return cached
    attribute = None
    if test.sample.kind == SampleKind.STABILITY_PULL:
        attribute = (
            StudyAttribute.objects.select_related("study")
            .filter(study__pull_points__sample_id=test.sample_id, method_code=test.method_code)
            .first()
        )
    test._study_attribute = attribute
    return attribute


def _limit(value: float | None) -> Decimal | None:
    return None if value is None else float_as_decimal(value)


def test_verdict(value: Decimal | float, test: Test, expanded: Decimal | str | None = None) -> str:
    """The verdict of ``value`` on ``test``: against its study attribute's limits for a pull
    (simple acceptance), else against its specification line by the line's rule."""
    attribute = study_attribute_of(test)
    if attribute is None:
        return line_verdict(value, test.specification_line, expanded)
    return verdict_for(
        value, minimum=_limit(attribute.minimum), maximum=_limit(attribute.maximum), comparison=Comparison.ABSOLUTE
    )


def limits_text(attribute: StudyAttribute) -> str:
    """The attribute's limits in words: "at most 10", "at least 0.5", "0.5 to 10"."""
    if attribute.minimum is not None and attribute.maximum is not None:
        return f"{attribute.minimum:g} to {attribute.maximum:g}"
    if attribute.maximum is not None:
        return f"at most {attribute.maximum:g}"
    return f"at least {attribute.minimum:g}"


def pull_failure_alert(actor: Actor, test: Test) -> None:
    """Raise the study's alert for an accepted pull test beyond the study's limit (once per
    test: the evaluation raises the same episode). Runs in the caller's transaction; the
    episode key is this test's, which the caller holds locked, so nobody else inserts it."""
    attribute = study_attribute_of(test)
    pull = PullPoint.objects.select_related("condition", "lot").get(sample_id=test.sample_id)
    study = attribute.study
    alerts_raise([
        AlertDraft(
            source=AlertSource.STABILITY, rule="pull_out_of_limit", series_key=f"stability:{study.code}",
            episode_key=f"stability:{study.code}|pull_out_of_limit|test{test.pk}",
            message=f"Study {study.code}: {test.method_code} = {test.reported} {test.unit} on lot {pull.lot.code} at "
            f"{pull.condition.temperature_c:g} °C ({pull.condition.light}), {pull.elapsed_months:.2f} months, is outside "
            f"the study's acceptance limits ({limits_text(attribute)})",
            points=[{"test_id": test.pk, "value": test.value, "months": pull.elapsed_months}],
            method_code=test.method_code, product_id=study.product_id, lot_id=pull.lot_id, study_id=study.pk,
        )
    ], actor)


test_verdict.__test__ = False  # a service, not a pytest test
