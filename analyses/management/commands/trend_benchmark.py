"""Benchmark the vectorised trend scan against a plain per-point Python loop.

Synthetic QC data (numpy RNG, fixed seed; invented series with shifts, drifts and
outliers) are scanned with every Westgard, Nelson, EWMA and out-of-trend rule twice in one process:
by ``analyses.trends.scan.series_scan`` and by the REFERENCE LOOP below, which exists
only as the comparison baseline. The loop may run on a subset of series and be scaled
linearly; the output says so. On that subset both must give the same episodes.
"""
from __future__ import annotations

import math
import time
from collections.abc import Callable

import numpy as np
import pandas as pd
from django.core.management.base import BaseCommand, CommandError

from scipy import stats

from analyses.trends.ewma import DEFAULT_SMOOTHING, DEFAULT_WIDTH
from analyses.trends.out_of_trend import DEFAULT_LEVEL, DEFAULT_WINDOW
from analyses.trends.scan import FAMILIES, series_scan
from analyses.trends.westgard import MINIMUM_BASELINE_POINTS

SEED = 20240611
ALL_FAMILIES = (*FAMILIES, "out_of_trend")
RUN_SIZE = 5  # results per analytical run (for R-4s)

EpisodeRow = tuple[str, str, str, int, int, tuple[int, ...]]  # series, rule, side, first, last, points


def synthetic_results(series: int, points: int, seed: int = SEED) -> pd.DataFrame:
    """Invented QC results: each series has its own mean and SD; after the baseline some
    series shift, some drift, and a few results are outliers."""
    rng = np.random.default_rng(seed)
    means = rng.uniform(0.2, 20.0, series)
    sds = means * rng.uniform(0.01, 0.05, series)
    noise = rng.standard_normal((series, points))
    position = np.arange(points)
    start = rng.integers(MINIMUM_BASELINE_POINTS, max(points, MINIMUM_BASELINE_POINTS + 1), series)
    after = position[None, :] >= start[:, None]
    shifted = rng.random(series) < 1 / 3
    noise += np.where(after & shifted[:, None], rng.uniform(1.0, 3.0, series)[:, None], 0.0)
    drifting = rng.random(series) < 1 / 6
    noise += np.where(after & drifting[:, None], (position[None, :] - start[:, None]) * 0.01, 0.0)
    outliers = (rng.random((series, points)) < 0.001) & (position[None, :] >= MINIMUM_BASELINE_POINTS)
    noise += np.where(outliers, 4.0 * rng.choice([-1.0, 1.0], (series, points)), 0.0)
    return pd.DataFrame(
        {
            "series_id": np.repeat([f"S{i:05d}" for i in range(series)], points),
            "sequence": np.tile(position, series),
            "value": (means[:, None] + sds[:, None] * noise).ravel(),
            "run_id": np.tile(position // RUN_SIZE, series),
        }
    )


# ---------------------------------------------------------------------------------
# REFERENCE LOOP: the comparison baseline only. Plain Python, one point at a time,
# written from the rule definitions, independent of the vectorised code.
# ---------------------------------------------------------------------------------


def loop_scan(results: pd.DataFrame, smoothing: float = DEFAULT_SMOOTHING, width: float = DEFAULT_WIDTH) -> set[EpisodeRow]:
    found: set[EpisodeRow] = set()
    ordered = results.sort_values(["series_id", "sequence"])
    for series_id, frame in ordered.groupby("series_id", sort=True):
        values = frame["value"].tolist()
        runs = frame["run_id"].tolist()
        for rule, side, first, last, points in loop_series(values, runs, smoothing, width):
            found.add((series_id, rule, side, first, last, points))
    return found


def loop_series(values: list[float], runs: list, smoothing: float, width: float) -> list[tuple]:
    baseline = values[:MINIMUM_BASELINE_POINTS]
    mean = sum(baseline) / len(baseline)
    sd = math.sqrt(sum((v - mean) ** 2 for v in baseline) / (len(baseline) - 1))
    z = [(v - mean) / sd for v in values]
    episodes: list[tuple] = []
    for side, sign in (("+", 1.0), ("-", -1.0)):
        signed = [sign * v for v in z]
        episodes += loop_window_rule("westgard_1_2s", side, [v > 2 for v in signed], 1, 1)
        episodes += loop_window_rule("westgard_1_3s", side, [v > 3 for v in signed], 1, 1)
        episodes += loop_window_rule("westgard_2_2s", side, [v > 2 for v in signed], 2, 2)
        episodes += loop_window_rule("westgard_4_1s", side, [v > 1 for v in signed], 4, 4)
        episodes += loop_window_rule("westgard_10_x", side, [v > 0 for v in signed], 10, 10)
        episodes += loop_window_rule("nelson_1", side, [v > 3 for v in signed], 1, 1)
        episodes += loop_window_rule("nelson_2", side, [v > 0 for v in signed], 9, 9)
        episodes += loop_window_rule("nelson_5", side, [v > 2 for v in signed], 2, 3)
        episodes += loop_window_rule("nelson_6", side, [v > 1 for v in signed], 4, 5)
    episodes += loop_range_rule(z, runs)
    episodes += loop_trend_rule(values)
    episodes += loop_alternation_rule(values)
    episodes += loop_window_rule("nelson_7", "", [abs(v) <= 1 for v in z], 15, 15)
    episodes += loop_window_rule("nelson_8", "", [abs(v) > 1 for v in z], 8, 8)
    episodes += loop_ewma(z, smoothing, width)
    episodes += loop_out_of_trend(values)
    return episodes


def loop_out_of_trend(values: list[float], window: int = DEFAULT_WINDOW, level: float = DEFAULT_LEVEL) -> list[tuple]:
    """A least-squares line through the ``window`` results before each point (time = position)."""
    quantile = stats.t.ppf(0.5 + level / 2, window - 2)
    above, below = [False] * len(values), [False] * len(values)
    for i in range(window, len(values)):
        times = range(i - window, i)
        t_mean = sum(times) / window
        y_mean = sum(values[i - window:i]) / window
        sxx = sum((t - t_mean) ** 2 for t in times)
        sxy = sum((t - t_mean) * (values[t] - y_mean) for t in times)
        slope = sxy / sxx
        sse = max(sum((values[t] - y_mean) ** 2 for t in times) - slope * sxy, 0.0)
        predicted = y_mean + slope * (i - t_mean)
        half = quantile * math.sqrt(sse / (window - 2) * (1 + 1 / window + (i - t_mean) ** 2 / sxx))
        above[i], below[i] = values[i] > predicted + half, values[i] < predicted - half
    return loop_episodes("out_of_trend", "+", above, above) + loop_episodes("out_of_trend", "-", below, below)


def loop_window_rule(rule: str, side: str, condition: list[bool], needed: int, size: int) -> list[tuple]:
    covered = [False] * len(condition)
    for i in range(size - 1, len(condition)):
        count = 0
        for j in range(i - size + 1, i + 1):
            if condition[j]:
                count += 1
        if count >= needed:
            for j in range(i - size + 1, i + 1):
                covered[j] = True
    flagged = [c and f for c, f in zip(condition, covered)]
    return loop_episodes(rule, side, flagged, covered)


def loop_range_rule(z: list[float], runs: list) -> list[tuple]:
    members: dict = {}
    for i, run in enumerate(runs):
        members.setdefault(run, []).append(i)
    covered = [False] * len(z)
    flagged = [False] * len(z)
    for indices in members.values():
        if any(z[i] > 2 for i in indices) and any(z[i] < -2 for i in indices):
            for j in range(min(indices), max(indices) + 1):
                covered[j] = True
            for i in indices:
                flagged[i] = abs(z[i]) > 2
    return loop_episodes("westgard_r_4s", "", flagged, covered)


def loop_trend_rule(values: list[float]) -> list[tuple]:
    episodes: list[tuple] = []
    for side, moved in (("up", lambda a, b: b > a), ("down", lambda a, b: b < a)):
        covered = [False] * len(values)
        for i in range(5, len(values)):
            if all(moved(values[j - 1], values[j]) for j in range(i - 4, i + 1)):
                for j in range(i - 5, i + 1):
                    covered[j] = True
        episodes += loop_episodes("nelson_3", side, covered, covered)
    return episodes


def loop_alternation_rule(values: list[float]) -> list[tuple]:
    covered = [False] * len(values)
    for i in range(13, len(values)):
        steps = [values[j] - values[j - 1] for j in range(i - 12, i + 1)]
        if all(steps[k] * steps[k - 1] < 0 for k in range(1, len(steps))):
            for j in range(i - 13, i + 1):
                covered[j] = True
    return loop_episodes("nelson_4", "", covered, covered)


def loop_ewma(z: list[float], smoothing: float, width: float) -> list[tuple]:
    statistic, above, below = 0.0, [], []
    for t, value in enumerate(z, start=1):
        statistic = smoothing * value + (1 - smoothing) * statistic
        sigma = math.sqrt(smoothing / (2 - smoothing) * (1 - (1 - smoothing) ** (2 * t)))
        above.append(statistic > width * sigma)
        below.append(statistic < -width * sigma)
    return loop_episodes("ewma", "+", above, above) + loop_episodes("ewma", "-", below, below)


def loop_episodes(rule: str, side: str, flagged: list[bool], covered: list[bool]) -> list[tuple]:
    episodes, current = [], None
    for i in range(len(covered)):
        if covered[i]:
            current = current if current is not None else []
            if flagged[i]:
                current.append(i)
        else:
            if current:
                episodes.append((rule, side, current[0], current[-1], tuple(current)))
            current = None
    if current:
        episodes.append((rule, side, current[0], current[-1], tuple(current)))
    return episodes


# ---------------------------------------------------------------------------------


def scan_rows(scan: pd.DataFrame) -> set[EpisodeRow]:
    return {
        (r.series_id, r.rule, r.side, int(r.first), int(r.last), tuple(r.points))
        for r in scan.itertuples(index=False)
    }


def timed(action: Callable[[], object]) -> tuple[object, float]:
    started = time.perf_counter()
    outcome = action()
    return outcome, time.perf_counter() - started


class Command(BaseCommand):
    help = "Time the vectorised trend scan (Westgard + Nelson + EWMA + out-of-trend) against a per-point Python loop."

    def add_arguments(self, parser):
        parser.add_argument("--series", type=int, default=500, help="number of series (default 500)")
        parser.add_argument("--points", type=int, default=2000, help="results per series (default 2000)")
        parser.add_argument(
            "--loop-series", type=int, default=None,
            help="series the reference loop runs on (default: all, so both run over the same data; fewer are scaled linearly)",
        )
        parser.add_argument("--seed", type=int, default=SEED)

    def handle(self, *args, **options):
        series, points = options["series"], options["points"]
        loop_count = series if options["loop_series"] is None else options["loop_series"]
        if series < 1 or points < MINIMUM_BASELINE_POINTS or loop_count < 1:
            raise CommandError(f"need --series >= 1, --points >= {MINIMUM_BASELINE_POINTS}, --loop-series >= 1")
        loop_count = min(loop_count, series)
        total = series * points
        say = self.stdout.write
        say(f"trend_benchmark: {series} series x {points} results = {total:,} results (seed {options['seed']})")

        results, seconds = timed(lambda: synthetic_results(series, points, options["seed"]))
        say(f"generated synthetic results in {seconds:.2f} s")

        say("vectorised scan (Westgard + Nelson + EWMA + out-of-trend) ...")
        scan, fast = timed(lambda: series_scan(results, families=ALL_FAMILIES))
        say(f"vectorised scan: {fast:.2f} s, {total / fast:,.0f} results/s, {len(scan):,} episodes")

        subset_ids = sorted(results["series_id"].unique())[:loop_count]
        subset = results[results["series_id"].isin(subset_ids)]
        say(f"reference loop on {loop_count} series ({len(subset):,} results) ...")
        expected, slow = timed(lambda: loop_scan(subset))
        say(f"reference loop: {slow:.2f} s, {len(subset) / slow:,.0f} results/s")
        loop_full = slow * total / len(subset)
        if loop_count < series:
            say(f"reference loop scaled linearly to {total:,} results: {loop_full:.1f} s (estimate, not measured)")
        else:
            say(f"reference loop on all {total:,} results: {loop_full:.1f} s (measured)")
        say(f"ratio loop / vectorised (same number of results): {loop_full / fast:.1f}x")

        found = scan_rows(scan[scan["series_id"].isin(subset_ids)])
        if found != expected:
            raise CommandError(
                f"vectorised and loop episodes differ on the subset: {len(found - expected)} only vectorised, "
                f"{len(expected - found)} only loop"
            )
        say(f"check: vectorised and loop episodes identical on the {loop_count}-series subset ({len(found):,} episodes)")
