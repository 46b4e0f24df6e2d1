"""The trend_benchmark command at tiny sizes: it prints its figures, and the vectorised scan
and the reference loop (written from the Westgard and Nelson rule definitions and the
NIST/SEMATECH EWMA formulas, references.md "found", and the textbook least-squares
prediction interval for out-of-trend) give the same episodes. No timing is asserted.
"""
from __future__ import annotations

import io

import pytest
from django.core.management import call_command
from django.core.management.base import CommandError

from analyses.management.commands import trend_benchmark
from analyses.management.commands.trend_benchmark import ALL_FAMILIES, loop_scan, scan_rows, synthetic_results
from analyses.trends.scan import series_scan


def run(**options) -> str:
    out = io.StringIO()
    call_command("trend_benchmark", stdout=out, **options)
    return out.getvalue()


def test_prints_the_figures_and_the_check():
    text = run(series=4, points=150, loop_series=2)
    assert "4 series x 150 results = 600 results" in text
    assert "vectorised scan:" in text and "results/s" in text
    assert "reference loop:" in text
    assert "scaled linearly" in text and "estimate, not measured" in text
    assert "ratio loop / vectorised" in text
    assert "identical on the 2-series subset" in text


def test_by_default_the_loop_runs_over_the_same_data_as_the_scan():
    text = run(series=2, points=120)
    assert "reference loop on 2 series" in text and "(measured)" in text


def test_loop_on_every_series_is_measured_not_scaled():
    text = run(series=2, points=120, loop_series=5)
    assert "(measured)" in text and "scaled linearly" not in text


def test_vectorised_and_loop_agree_on_small_data():
    results = synthetic_results(series=6, points=300, seed=5)
    vectorised = scan_rows(series_scan(results, families=ALL_FAMILIES))
    looped = loop_scan(results)
    assert vectorised == looped
    assert {row[1] for row in looped} >= {"westgard_1_2s", "westgard_r_4s", "nelson_2", "ewma", "out_of_trend"}


def test_a_disagreement_stops_the_command(monkeypatch):
    real = trend_benchmark.loop_scan
    monkeypatch.setattr(trend_benchmark, "loop_scan", lambda results: set(list(real(results))[1:]))
    with pytest.raises(CommandError, match="differ"):
        run(series=3, points=200, loop_series=3)


def test_bad_sizes_are_refused():
    with pytest.raises(CommandError, match="--points"):
        run(series=2, points=10)
