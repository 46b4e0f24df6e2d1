"""Scanning many series at once must equal applying the single-series functions one by one.

The single-series functions are checked against the published rule definitions in
test_westgard.py, test_run_rules.py and test_ewma.py; here the series data are invented.
"""
from __future__ import annotations

import numpy as np
import pandas as pd
import pytest

from analyses.errors import InvalidInput
from analyses.trends.ewma import ewma_chart
from analyses.trends.run_rules import nelson_evaluate
from analyses.trends.scan import SCAN_COLUMNS, series_scan
from analyses.trends.westgard import baseline_establish, westgard_evaluate


def invented_results(seed: int = 3, n_series: int = 6, with_runs: bool = False) -> pd.DataFrame:
    rng = np.random.default_rng(seed)
    frames = []
    for s in range(n_series):
        n = int(rng.integers(25, 120))
        values = rng.normal(10.0 + s, 0.5, n)
        values[n // 2 :] += rng.choice([0.0, 0.6, -0.8])  # a shift in some series
        values[n // 3 : n // 3 + 7] += np.linspace(0, 1.5, 7) * rng.choice([1, -1])  # a short drift
        frame = pd.DataFrame({"series_id": f"QC-{s}", "sequence": np.arange(n) * 10 + 5, "value": values})
        if with_runs:
            frame["run_id"] = np.arange(n) // 3
        frames.append(frame)
    return pd.concat(frames, ignore_index=True)


def one_by_one(results: pd.DataFrame, limits: dict[str, tuple[float, float]], with_runs: bool) -> set:
    found = set()
    for series_id, frame in results.sort_values("sequence").groupby("series_id"):
        mean, sd = limits[series_id]
        values = frame["value"].tolist()
        runs = frame["run_id"].tolist() if with_runs else None
        episodes = westgard_evaluate(values, mean, sd, runs) + nelson_evaluate(values, mean, sd)
        episodes += ewma_chart(values, mean, sd).episodes
        found |= {(series_id, e.rule, e.side, e.first, e.last, e.points) for e in episodes}
    return found


def as_set(scan: pd.DataFrame) -> set:
    return {(r.series_id, r.rule, r.side, r.first, r.last, r.points) for r in scan.itertuples()}


@pytest.mark.parametrize("with_runs", [False, True])
def test_scan_equals_single_series_functions(with_runs):
    results = invented_results(with_runs=with_runs)
    limits = {sid: (float(f["value"].mean()), float(f["value"].std())) for sid, f in results.groupby("series_id")}
    limits_frame = pd.DataFrame([(k, m, s) for k, (m, s) in limits.items()], columns=["series_id", "mean", "sd"])
    shuffled = results.sample(frac=1.0, random_state=1)  # row order must not matter
    scan = series_scan(shuffled, limits_frame)
    assert list(scan.columns) == SCAN_COLUMNS
    expected = one_by_one(results, limits, with_runs)
    assert len(expected) > 20  # the invented data do break rules
    assert as_set(scan) == expected
    assert scan["key"].is_unique


def test_scan_baseline_uses_the_first_points_of_each_series():
    results = invented_results(seed=5, n_series=3)
    limits = {}
    for series_id, frame in results.groupby("series_id"):
        baseline = baseline_establish(frame.sort_values("sequence")["value"].head(20))
        limits[series_id] = (baseline.mean, baseline.sd)
    assert as_set(series_scan(results)) == one_by_one(results, limits, with_runs=False)


def test_sequence_values_and_keys():
    results = invented_results(seed=9, n_series=2)
    scan = series_scan(results)
    row = scan.iloc[0]
    assert row.first_sequence == row.first * 10 + 5 and row.last_sequence == row.last * 10 + 5
    assert row.key == f"{row.series_id}|{row.rule}|{row.first_sequence}"
    assert (scan["n_points"] == scan["points"].map(len)).all()


def test_keys_survive_appended_results():
    # Deduplication: every episode key of an earlier scan is still there after results are appended.
    results = invented_results(seed=11, n_series=5)
    limits = series_scan_limits(results)
    full = series_scan(results, limits)
    for keep in (30, 47, 80):
        prefix = results.groupby("series_id").head(keep)
        earlier = series_scan(prefix, limits)
        assert set(earlier["key"]) <= set(full["key"])
        # An episode may grow at its end, never at its start.
        merged = earlier.merge(full, on="key", suffixes=("_then", "_now"))
        assert (merged["first_then"] == merged["first_now"]).all()
        assert (merged["last_then"] <= merged["last_now"]).all()


def series_scan_limits(results: pd.DataFrame) -> pd.DataFrame:
    stats = results.groupby("series_id")["value"].agg(["mean", "std"]).rename(columns={"std": "sd"})
    return stats


def test_families_can_be_chosen():
    scan = series_scan(invented_results(), families=["ewma"])
    assert set(scan["rule"]) == {"ewma"}


def test_empty_scan_has_the_columns():
    results = pd.DataFrame({"series_id": "A", "sequence": range(20), "value": [1.0, 1.1] * 10})
    scan = series_scan(results, families=["westgard"])
    assert list(scan.columns) == SCAN_COLUMNS


@pytest.mark.parametrize(
    "change, field",
    [
        (lambda r: r.drop(columns="value"), "value"),
        (lambda r: r.assign(value=r["value"].where(r.index != 3, np.nan)), "value"),
        (lambda r: r.assign(sequence=r["sequence"].where(r.index != 3, r["sequence"].iloc[2])), "sequence"),
        (lambda r: r[r["series_id"] != "QC-0"].groupby("series_id").head(12), "results"),
    ],
)
def test_bad_results_name_the_field(change, field):
    with pytest.raises(InvalidInput) as caught:
        series_scan(change(invented_results()))
    assert field in caught.value.fields


def test_limits_must_cover_every_series():
    results = invented_results()
    limits = series_scan_limits(results).drop(index="QC-2")
    with pytest.raises(InvalidInput) as caught:
        series_scan(results, limits)
    assert "limits" in caught.value.fields and "QC-2" in caught.value.detail


def test_datetime_keys_do_not_depend_on_the_rest_of_the_batch():
    values = [0.0] * 20 + [2.5]
    midnight = pd.DataFrame(
        {"series_id": "A", "sequence": pd.date_range("2024-03-01", periods=21, freq="D"), "value": values}
    )
    later = pd.concat(
        [midnight, pd.DataFrame({"series_id": ["A"], "sequence": [pd.Timestamp("2024-03-22 14:30")], "value": [0.0]})]
    )
    limits = pd.DataFrame({"series_id": ["A"], "mean": [0.0], "sd": [1.0]})
    key = "A|westgard_1_2s|2024-03-21T00:00:00.000000"
    assert key in set(series_scan(midnight, limits, families=["westgard"])["key"])
    assert key in set(series_scan(later, limits, families=["westgard"])["key"])


def test_sequence_of_mixed_kinds_is_refused():
    results = pd.DataFrame({"series_id": "A", "sequence": [1, "b"] * 10, "value": [1.0, 2.0] * 10})
    with pytest.raises(InvalidInput) as caught:
        series_scan(results)
    assert "sequence" in caught.value.fields


def test_timezone_aware_times_work_for_out_of_trend():
    times = pd.date_range("2024-01-01", periods=30, freq="12h", tz="Europe/Paris")
    values = np.r_[np.linspace(1.0, 2.0, 29) + np.tile([0.01, -0.01], 15)[:29], [5.0]]  # invented
    scan = series_scan(pd.DataFrame({"series_id": "A", "sequence": times, "value": values}), families=["out_of_trend"])
    assert 29 in {p for points in scan["points"] for p in points}
