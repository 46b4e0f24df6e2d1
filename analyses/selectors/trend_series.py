"""Result series for trend rules, read in one query into a DataFrame.

A QC series is one method on the check samples of one reference lot ("qc:<lot>:<method>");
a production series is one method on the routine samples of one product
("production:<product>:<method>"). Only accepted tests count, in order of receipt.
"""
from __future__ import annotations

from collections.abc import Iterable

import pandas as pd

from analyses.models import SampleKind, SeriesKind, Test, TestState

SERIES_COLUMNS = ["test_id", "series_id", "kind", "method_code", "lot_id", "product_id", "received_at", "value", "sequence"]


def series_key(kind: str, owner_id: int, method_code: str) -> str:
    return f"{kind}:{owner_id}:{method_code}"


def trend_series_frame(series_keys: Iterable[str] | None = None) -> pd.DataFrame:
    """Every accepted QC-check and routine result, one row per test, ordered by series and receipt."""
    rows = Test.objects.filter(
        state=TestState.ACCEPTED,
        value__isnull=False,
        sample__kind__in=(SampleKind.QC_CHECK, SampleKind.ROUTINE),
    ).values_list("id", "method_code", "value", "sample__kind", "sample__lot_id", "sample__lot__product_id", "sample__received_at")
    frame = pd.DataFrame.from_records(
        list(rows), columns=["test_id", "method_code", "value", "sample_kind", "lot_id", "product_id", "received_at"]
    )
    if frame.empty:
        return pd.DataFrame(columns=SERIES_COLUMNS)
    is_qc = frame["sample_kind"] == SampleKind.QC_CHECK
    frame["kind"] = is_qc.map({True: SeriesKind.QC_CHECK.value, False: SeriesKind.PRODUCTION.value})
    owner = frame["lot_id"].where(is_qc, frame["product_id"]).astype("int64").astype(str)
    frame["series_id"] = frame["kind"] + ":" + owner + ":" + frame["method_code"]
    if series_keys is not None:
        frame = frame[frame["series_id"].isin(set(series_keys))]
    received = pd.to_datetime(frame["received_at"], utc=True)
    # Two results received in the same instant would tie; a nudge of test-id nanoseconds
    # (far below a millisecond) keeps the order of receipt, then of test creation.
    frame["sequence"] = received + pd.to_timedelta(frame["test_id"] % 1_000_000, unit="ns")
    frame = frame.sort_values(["series_id", "sequence"], kind="stable").reset_index(drop=True)
    return frame[SERIES_COLUMNS]
