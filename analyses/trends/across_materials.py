"""Westgard rules across the control materials measured in the same run.

A run is one method's analytical run in which one or more control materials (levels) are
measured, each against its own mean and SD. These rules compare the z-scores of
different materials in one run; the within-material rules (``westgard``) are unchanged.

Definitions (pages found with the search tool; "found" unless tagged):
- R-4s: reject when one control in a run exceeds +2 s and another exceeds −2 s; it is
  applied within a run, across the levels measured in it (LabCE, "Westgard Multi-Rule
  Approach", labce.com/spg113780; Westgard, power-function lesson on westgard.com: R-4s
  "only within a run"). Some texts read it as a range above 4 s (QCNet's example +2.8 s
  and −1.3 s); we keep Westgard's wording, so that pair does not trigger.
- 2-2s across materials: two controls of different materials in one run beyond the same
  ±2 s (LabCE spg113780, "one of each (within a run and both outside the same 2SD)";
  PMC3909142 table 1: 2-2s applied "within" or "across" materials).
- 2 of 3 2s: with three control levels, two of the three in one run beyond the same ±2 s
  (LabCE, "Westgard Multi-Rule Approach continued", labce.com/spg574557). Westgard uses it
  in place of 2-2s when N = 3; so a run of three levels is judged by 2 of 3 2s and any
  other run by 2-2s across, never both for the same run. Its across-runs reading ("2 of the
  last 3 values") is not applied here.
"Beyond" is strict (|z| > 2), as in ``westgard``: the sources say "exceeds". A material
measured twice in a run counts once; its two points alone are the within-material rules'.
"""
from __future__ import annotations

from collections.abc import Hashable, Mapping, Sequence

import numpy as np
import pandas as pd

from analyses.errors import InvalidInput
from analyses.trends.episodes import Episode, RuleMarks, episode_table, episodes_of_table
from analyses.trends.inputs import finite_number, finite_vector, positive_number, same_length
from analyses.trends.layout import SeriesLayout, layout_from_codes, layout_single
from analyses.trends.scan import SCAN_COLUMNS, given_limits, scan_table
from analyses.trends.westgard import run_codes, z_of
from analyses.trends.windows import runs_covered

THREE_LEVELS = 3  # the run design for which Westgard names 2 of 3 2s


def across_material_marks(z: np.ndarray, layout: SeriesLayout, runs: np.ndarray, materials: np.ndarray) -> list[RuleMarks]:
    """Marks of the across-material rules on flat z-scores.

    ``layout`` groups the points of each method in time order; ``runs`` (from
    :func:`run_codes`) and ``materials`` are one integer code per point.
    """
    count = int(runs.max(initial=-1)) + 1
    above, below = z > 2, z < -2
    levels = _materials_per_run(runs, materials, np.ones(len(z), dtype=bool), count)
    n_above = _materials_per_run(runs, materials, above, count)
    n_below = _materials_per_run(runs, materials, below, count)
    # one material above and a different one below: at least two materials beyond ±2 s
    n_beyond = _materials_per_run(runs, materials, above | below, count)
    marks = [_run_marks("westgard_r_4s_across", "", (n_above > 0) & (n_below > 0) & (n_beyond >= 2), above | below, runs)]
    for rule, design in (("westgard_2_2s_across", levels != THREE_LEVELS), ("westgard_2of3_2s", levels == THREE_LEVELS)):
        for side, beyond, n in (("+", above, n_above), ("-", below, n_below)):
            marks.append(_run_marks(rule, side, design & (n >= 2), beyond, runs))
    return marks


def across_materials_evaluate(
    values: Sequence[float],
    materials: Sequence[Hashable],
    run_ids: Sequence[Hashable],
    baselines: Mapping[Hashable, tuple[float, float]],
) -> list[Episode]:
    """Episodes of the across-material rules on one method's control results in time order.

    ``materials`` names each result's control material (level), ``run_ids`` its run, and
    ``baselines`` maps each material to its (mean, SD). Positions are places in ``values``.
    """
    array = finite_vector(values, "values")
    material_array = np.asarray(materials, dtype=object)
    run_array = np.asarray(run_ids, dtype=object)
    same_length("materials", material_array, len(array))
    same_length("run_ids", run_array, len(array))
    codes, names = pd.factorize(pd.Series(material_array, dtype=object))
    if (codes < 0).any():
        raise InvalidInput.for_field("materials", "must name a material for every value")
    missing = [name for name in names if name not in baselines]
    if missing:
        raise InvalidInput.for_field("baselines", f"no mean/SD for materials {missing[:5]}")
    mean = np.array([finite_number(baselines[name][0], "baselines") for name in names])
    sd = np.array([positive_number(baselines[name][1], "baselines") for name in names])
    z = z_of(array, mean[codes], sd[codes])
    layout = layout_single(len(z))
    marks = across_material_marks(z, layout, run_codes(layout.group, run_array), codes)
    return episodes_of_table(episode_table(marks, layout))


def across_materials_scan(results: pd.DataFrame, limits: pd.DataFrame) -> pd.DataFrame:
    """Across-material episodes of every run group (a method) in ``results``.

    ``results`` has columns run_group (the method), series_id (the control material, one
    series per material), sequence, value and run_id; ``limits`` has series_id, mean and sd.
    Points are ordered by (run_group, sequence), ties kept in the order given. Returns
    ``SCAN_COLUMNS`` with series_id set to the run group; positions count within it.
    """
    missing = [name for name in ("run_group", "series_id", "sequence", "value", "run_id") if name not in results.columns]
    if missing:
        raise InvalidInput("results lacks columns: " + ", ".join(missing), {name: ["required"] for name in missing})
    values = pd.to_numeric(results["value"], errors="coerce").to_numpy(dtype=float)
    if not np.all(np.isfinite(values)):
        raise InvalidInput.for_field("value", "must contain finite numbers only")
    if results[["run_group", "series_id", "sequence"]].isna().any().any():
        raise InvalidInput.for_field("sequence", "run_group, series_id and sequence must be given for every result")
    group, group_ids = pd.factorize(results["run_group"], sort=True)
    material, material_ids = pd.factorize(results["series_id"])
    mean, sd = given_limits(limits, np.asarray(material_ids))
    frame = pd.DataFrame(
        {
            "group": group,
            "sequence": results["sequence"].to_numpy(),
            "z": z_of(values, mean[material], sd[material]),
            "material": material,
            "run_id": results["run_id"].to_numpy(),
        }
    )
    try:
        frame = frame.sort_values(["group", "sequence"], kind="stable").reset_index(drop=True)
    except TypeError:
        raise InvalidInput.for_field("sequence", "must be values of one kind (all numbers or all times)") from None
    layout = layout_from_codes(frame["group"].to_numpy())
    runs = run_codes(layout.group, frame["run_id"].to_numpy())
    marks = across_material_marks(frame["z"].to_numpy(), layout, runs, frame["material"].to_numpy())
    table = scan_table(episode_table(marks, layout), frame["sequence"].to_numpy(), np.asarray(group_ids))
    return table[SCAN_COLUMNS]


def _materials_per_run(runs: np.ndarray, materials: np.ndarray, condition: np.ndarray, count: int) -> np.ndarray:
    """How many different materials have a point meeting ``condition`` in each run."""
    width = int(materials.max(initial=-1)) + 1
    pairs = np.unique(runs[condition].astype(np.int64) * width + materials[condition])
    return np.bincount(pairs // max(width, 1), minlength=count)


def _run_marks(rule: str, side: str, broken: np.ndarray, condition: np.ndarray, runs: np.ndarray) -> RuleMarks:
    """A broken run covers its first to last point; its points meeting ``condition`` are flagged."""
    in_broken = broken[runs]
    return RuleMarks(rule, side, condition & in_broken, runs_covered(runs, in_broken))
