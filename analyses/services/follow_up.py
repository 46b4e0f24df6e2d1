"""Background work that follows an accepted test, queued after the commit."""
from __future__ import annotations

from analyses.models import PullPoint, SampleKind, SeriesKind, Test
from analyses.selectors.trend_series import series_key
from analyses.services.background import enqueue_on_commit

TREND_SCAN_TASK = "analyses.tasks.trend_scan_task"
STUDY_EVALUATE_TASK = "analyses.tasks.stability_study_evaluate_task"


def test_accepted_follow_up(test: Test) -> None:
    """Rescan the test's trend series, or re-evaluate its stability study."""
    sample = test.sample
    if sample.kind == SampleKind.QC_CHECK:
        enqueue_on_commit(TREND_SCAN_TASK, [series_key(SeriesKind.QC_CHECK, sample.lot_id, test.method_code)])
    elif sample.kind == SampleKind.ROUTINE:
        product_id = sample.lot.product_id
        enqueue_on_commit(TREND_SCAN_TASK, [series_key(SeriesKind.PRODUCTION, product_id, test.method_code)])
    elif sample.kind == SampleKind.STABILITY_PULL:
        study_id = PullPoint.objects.filter(sample=sample).values_list("study_id", flat=True).first()
        if study_id is not None:
            enqueue_on_commit(STUDY_EVALUATE_TASK, study_id)
