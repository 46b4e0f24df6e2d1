"""How far a shelf life may reach beyond the long-term data: the ICH Q1E Appendix A tree.

X is the period covered by the long-term data; the tree allows a shelf life Y of at most
``factor`` · X and at most X + ``months_beyond``, or no extrapolation (Y ≤ X). Which branch
applies depends on the storage category and on "significant change" at the accelerated
and intermediate conditions.

Sources (checked against copies of the guidelines found with the search tool; the
guideline texts themselves were not at hand):
- Q1E 2.4 / 2.5 and Appendix A, from a summary of Q1E's Appendix A ("found"): room
  temperature with significant change at the intermediate condition, no extrapolation;
  refrigerated with no significant change at accelerated, at most X + 6 months;
  refrigerated with significant change at accelerated (within 3 months, or between 3 and
  6), no extrapolation, and within 3 months the effect of short excursions is to be
  addressed; frozen, no extrapolation. The multipliers "up to 2X" (room temperature, no
  significant change) and its "X + 12 months" were found in a summary of the tree too;
  "up to 1.5X" (room temperature with significant change at accelerated but not at
  intermediate, and refrigerated without significant change) is from memory, with its
  "X + 6 months" found.
- Q1A(R2) 2.1.7 ("found", in a copy): significant change is judged "at any time during
  6 months' testing at the accelerated storage condition"; at least 6 months of a
  12-month intermediate study at submission; long-term 25 or 30 °C, intermediate 30 °C,
  accelerated 40 °C; refrigerated long-term 5 °C, accelerated 25 °C.

Section numbers given with each branch are from memory.

Project rules (no source, chosen to never allow more than the tree): a branch that needs
"no significant change" at a condition needs that condition tested for 6 months; a
missing accelerated (or, after significant change there, intermediate) condition means
no extrapolation. Every shelf life the evaluation supports rests on the statistical
analysis of the long-term data (Q1E "amenable to statistical analysis, analysis
performed"), so the tree's branches for data not analysed statistically do not arise.
"""
from __future__ import annotations

from collections.abc import Hashable, Sequence
from dataclasses import dataclass, field
from decimal import Decimal
from typing import Literal

import numpy as np

from analyses.errors import InvalidInput
from analyses.trends.inputs import finite_vector, same_length
from plugins.contract import float_as_decimal

StorageCategory = Literal["room_temperature", "refrigerated", "frozen"]
ConditionRole = Literal["long_term", "intermediate", "accelerated", "stress", "other"]
STORAGE_CATEGORIES: tuple[str, ...] = ("room_temperature", "refrigerated", "frozen")
# Q1A(R2) long-term conditions: freezer −20 ± 5 °C, refrigerator 5 ± 3 °C, room 25 or 30 °C
# ("found"); the boundaries between them are the project's own.
FROZEN_AT_OR_BELOW_C = -10.0
REFRIGERATED_AT_OR_BELOW_C = 10.0
# Q1A(R2): accelerated is 15 °C above room-temperature storage (25 → 40) and 20 °C above
# refrigerated (5 → 25), intermediate 5 °C above (25 → 30) ("found"). A dark condition at
# least 15 °C warmer than storage is accelerated (the coolest such), hotter ones are stress
# conditions (kinetics and Arrhenius only); warmer but closer is intermediate.
ACCELERATED_ABOVE_STORAGE_C = 15.0
TESTING_MONTHS_FOR_NO_CHANGE = 6.0  # Q1A(R2): 6 months' accelerated testing; 6 months of intermediate data
EARLY_CHANGE_MONTHS = 3.0  # Q1E 2.5.1.2: significant change within the first 3 months (refrigerated)


def storage_category_for(temperature_c: float) -> StorageCategory:
    """The category a storage temperature falls in (see the boundaries above)."""
    if temperature_c <= FROZEN_AT_OR_BELOW_C:
        return "frozen"
    if temperature_c <= REFRIGERATED_AT_OR_BELOW_C:
        return "refrigerated"
    return "room_temperature"


def category_fits(declared: str, temperature_c: float) -> bool:
    """A declared category may be stricter than the temperature suggests (a lab may treat
    an oil kept at 15 °C as refrigerated), never more permissive."""
    return STORAGE_CATEGORIES.index(declared) >= STORAGE_CATEGORIES.index(storage_category_for(temperature_c))


def condition_roles(
    storage_c: float, conditions: Sequence[tuple[Hashable, float, str]]
) -> dict[Hashable, ConditionRole]:
    """Role of each (id, temperature °C, light) condition relative to the storage temperature."""
    roles: dict[Hashable, ConditionRole] = {}
    warmer = sorted((t, key) for key, t, light in conditions if light == "dark" and t > storage_c)
    accelerated = [(t, key) for t, key in warmer if t - storage_c >= ACCELERATED_ABOVE_STORAGE_C]
    for key, t, light in conditions:
        if light != "dark":
            roles[key] = "other"  # light exposure is another pathway, not a Q1E condition
        elif t == storage_c:
            roles[key] = "long_term"
        elif t < storage_c:
            roles[key] = "other"
        elif t - storage_c < ACCELERATED_ABOVE_STORAGE_C:
            roles[key] = "intermediate"
        else:
            roles[key] = "accelerated" if key == accelerated[0][1] else "stress"
    return roles


@dataclass(frozen=True)
class SignificantChange:
    """Significant change of one attribute under one condition."""

    found: bool
    first_months: float | None  # earliest pull showing it
    tested_months: float  # last pull time under the condition
    reasons: list[str] = field(default_factory=list)  # the pulls that show it, earliest first


def initial_values(times: Sequence[float], values: Sequence[float], lots: Sequence[Hashable]) -> dict[str, tuple[float, float]]:
    """Per lot: (time, mean value) at its earliest pull under any condition, normally 0:
    the oil is the same under every condition until storage begins."""
    t, y = finite_vector(times, "times", 1), finite_vector(values, "values", 1)
    same_length("values", y, len(t))
    lot = np.asarray([str(x) for x in lots], dtype=object)
    same_length("lots", lot, len(t))
    out = {}
    for name in sorted(set(lot)):
        mask = lot == name
        first = float(t[mask].min())
        out[name] = (first, float(y[mask & (t == first)].mean()))
    return out


def significant_change(
    times: Sequence[float],
    values: Sequence[float],
    lots: Sequence[Hashable],
    initial: dict[str, tuple[float, float]],
    *,
    minimum: float | None,
    maximum: float | None,
    amount: float | None,
    exact: Sequence[Decimal | None] | None = None,
) -> SignificantChange:
    """For an edible oil: a result beyond the acceptance limits (Q1A(R2), "failure to meet
    its specification", found), or a change from the lot's initial value larger than the
    study's ``amount`` for the attribute (the oil's counterpart of Q1A's "5 % change in
    assay"; either direction). Results at the initial time itself do not count. ``exact``:
    each value as its test is judged on (its exact decimal), where known, for the limits."""
    t, y = finite_vector(times, "times", 1), finite_vector(values, "values", 1)
    same_length("values", y, len(t))
    lot = [str(x) for x in lots]
    same_length("lots", np.asarray(lot, dtype=object), len(t))
    judged = list(exact) if exact is not None else [None] * len(t)
    same_length("exact values", np.asarray(judged, dtype=object), len(t))
    if amount is not None and not amount > 0:
        raise InvalidInput.for_field("significant_change", "must be above 0")
    found: list[tuple[float, str]] = []
    for ti, yi, li, ei in sorted(zip(t, y, lot, judged), key=lambda row: row[:3]):
        start, start_value = initial.get(li, (0.0, None))
        if ti <= start:
            continue
        # decided in decimal arithmetic, on the exact value where known, else through the
        # documented 15-digit guard: a result at a limit, or a change of exactly the amount,
        # is not beyond it
        value = ei if ei is not None else float_as_decimal(yi)
        if maximum is not None and value > float_as_decimal(maximum):
            found.append((ti, f"lot {li} at {ti:g} months: {yi:.4g} is above the limit {maximum:g}"))
        elif minimum is not None and value < float_as_decimal(minimum):
            found.append((ti, f"lot {li} at {ti:g} months: {yi:.4g} is below the limit {minimum:g}"))
        elif (
            amount is not None and start_value is not None
            and abs(value - float_as_decimal(start_value)) > float_as_decimal(amount)
        ):
            found.append((ti, f"lot {li} at {ti:g} months: changed by {yi - start_value:+.4g} from {start_value:.4g}, "
                              f"more than {amount:g}"))
    return SignificantChange(
        found=bool(found),
        first_months=found[0][0] if found else None,
        tested_months=float(t.max()),
        reasons=[reason for _, reason in found],
    )


def change_across(changes: Sequence[SignificantChange]) -> SignificantChange | None:
    """Significant change of the product under one condition: any attribute's counts
    (Q1A(R2) lists the attributes whose failure each is a significant change). None if
    no attribute was tested there."""
    if not changes:
        return None
    shown = [c for c in changes if c.found]
    return SignificantChange(
        found=bool(shown),
        first_months=min(c.first_months for c in shown) if shown else None,
        tested_months=min(c.tested_months for c in changes),  # every attribute must be covered
        reasons=[r for c in shown for r in c.reasons],
    )


@dataclass(frozen=True)
class ExtrapolationBranch:
    code: str
    section: str  # where the branch stands in ICH Q1E (or "project rule")
    factor: float | None  # Y ≤ factor · X; None: no extrapolation
    months_beyond: float  # Y ≤ X + months_beyond
    reason: str

    def limit(self, long_term_months: float) -> float:
        """The longest shelf life this branch allows on X months of long-term data."""
        if self.factor is None:
            return long_term_months
        return min(self.factor * long_term_months, long_term_months + self.months_beyond)


def _no_extrapolation(code: str, section: str, reason: str) -> ExtrapolationBranch:
    return ExtrapolationBranch(code, section, None, 0.0, reason + "; no extrapolation beyond the long-term data")


def _unchanged_for_long_enough(change: SignificantChange) -> bool:
    return not change.found and change.tested_months >= TESTING_MONTHS_FOR_NO_CHANGE


def _untested_or_short(name: str, change: SignificantChange | None) -> str:
    if change is None:
        return f"no {name} condition was tested"
    return (f"no significant change at the {name} condition so far, but its data cover {change.tested_months:g} "
            f"of the {TESTING_MONTHS_FOR_NO_CHANGE:g} months needed to show none")


def extrapolation_branch(
    category: str, *, accelerated: SignificantChange | None, intermediate: SignificantChange | None
) -> ExtrapolationBranch:
    """The Appendix A branch for a study (see the module docstring for the sources)."""
    if category not in STORAGE_CATEGORIES:
        raise InvalidInput.for_field("storage_category", f"must be one of {', '.join(STORAGE_CATEGORIES)}")
    if category == "frozen":
        return _no_extrapolation(
            "frozen", "ICH Q1E 2.5.2",
            "storage in a freezer (short excursions are addressed by a test at a higher temperature, e.g. 5 °C)",
        )
    if intermediate is not None and intermediate.found:
        section = "ICH Q1E 2.4.2.2" if category == "room_temperature" else "project rule"
        return _no_extrapolation(
            f"{category}.intermediate_change", section,
            f"significant change at the intermediate condition from {intermediate.first_months:g} months",
        )
    if category == "refrigerated":
        if accelerated is not None and accelerated.found:
            if accelerated.first_months <= EARLY_CHANGE_MONTHS:
                return _no_extrapolation(
                    "refrigerated.accelerated_change_within_3_months", "ICH Q1E 2.5.1.2",
                    f"significant change at the accelerated condition within the first 3 months "
                    f"({accelerated.first_months:g}); short excursions from the label storage need to be addressed",
                )
            return _no_extrapolation(
                "refrigerated.accelerated_change_after_3_months", "ICH Q1E 2.5.1.2",
                f"significant change at the accelerated condition at {accelerated.first_months:g} months",
            )
        if accelerated is None or not _unchanged_for_long_enough(accelerated):
            return _no_extrapolation("refrigerated.accelerated_not_shown", "project rule",
                                     _untested_or_short("accelerated", accelerated))
        return ExtrapolationBranch(
            "refrigerated.no_accelerated_change", "ICH Q1E 2.5.1.1", 1.5, 6.0,
            "refrigerated storage, no significant change at the accelerated condition: up to 1.5X, at most X + 6 months",
        )
    if accelerated is None or not (accelerated.found or _unchanged_for_long_enough(accelerated)):
        return _no_extrapolation("room_temperature.accelerated_not_shown", "project rule",
                                 _untested_or_short("accelerated", accelerated))
    if not accelerated.found:
        return ExtrapolationBranch(
            "room_temperature.no_accelerated_change", "ICH Q1E 2.4.1", 2.0, 12.0,
            "room-temperature storage, no significant change at the accelerated condition: up to 2X, at most X + 12 months",
        )
    if intermediate is None or not _unchanged_for_long_enough(intermediate):
        return _no_extrapolation(
            "room_temperature.intermediate_not_shown", "project rule",
            f"significant change at the accelerated condition from {accelerated.first_months:g} months and "
            + _untested_or_short("intermediate", intermediate),
        )
    return ExtrapolationBranch(
        "room_temperature.accelerated_change_no_intermediate_change", "ICH Q1E 2.4.2.1", 1.5, 6.0,
        f"significant change at the accelerated condition from {accelerated.first_months:g} months, none at the "
        "intermediate condition: up to 1.5X, at most X + 6 months",
    )
