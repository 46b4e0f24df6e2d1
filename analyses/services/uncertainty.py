"""The uncertainty budget of each result and of its test's mean, and the verdicts that use it.

``result_uncertainty_record`` runs inside result entry and correction, right after the new
result row is inserted: it stores the result's budget, re-judges the result by its line's
decision rule with that U, and, once every replicate is in, stores the mean's budget and
re-judges the test's aggregate (the ``aggregate`` dict the caller is about to store).

The inputs' standard uncertainties come from a budget source (``budget_source``): the per-method
default budget (plugins.default_budget), overridden by ``TracedBudget`` for what the result was
measured with (issue 9): the titrant's standardisation, the balance's and the burette's calibrations. The repeatability is
the plugin's, unless settings.OLEOTRACE_REPEATABILITY_SOURCE is "lab_duplicates" and the lab has
at least LAB_PAIRS_NEEDED accepted duplicate pairs for the method (the most recent ones are used).
"""
from __future__ import annotations

from collections.abc import Mapping, Sequence
from decimal import Decimal
from typing import Any

from django.conf import settings
from django.utils import timezone

from analyses.audit import audit_append, created, json_safe
from analyses.models import (
    AuditAction,
    Calibration,
    Instrument,
    InstrumentKind,
    Result,
    ResultStatus,
    ResultUncertainty,
    Test,
    TestState,
    TestUncertainty,
)
from analyses.services.result_trace import TITRANT_INPUT, stored_inputs
from analyses.services.review_warnings import line_inputs
from analyses.services.pull_judging import test_verdict
from analyses.traceability.standardisation import tolerance_as_u, weighing_by_difference_u
from plugins.contract import MethodInputError, MethodPlugin, QuantityInput, split_parameter
from plugins.default_budget import DefaultBudget
from plugins.registry import UnknownMethod, get_registry
from plugins.uncertainty import (
    Budget,
    BudgetSource,
    StandardUncertainty,
    mean_budget,
    repeatability_from_duplicates,
    result_budget,
)

REPEATABILITY_SOURCES = ("plugin", "lab_duplicates")
LAB_PAIRS_NEEDED = 15  # enough pairs for a pooled s_r with 15 degrees of freedom (common practice, no source)
LAB_PAIRS_USED = 60
AUDITED_FIELDS = ("combined", "coverage_factor", "expanded", "source")


def lab_duplicate_pairs(method_code: str, limit: int = LAB_PAIRS_USED) -> list[tuple[float, float]]:
    """The most recent accepted duplicate pairs of ``method_code`` (QC-check and routine alike)."""
    checks = (
        Test.objects.filter(method_code=method_code, state=TestState.ACCEPTED, replicates=2, duplicate_check__isnull=False)
        .order_by("-reviewed_at", "-id")
        .values_list("duplicate_check", flat=True)[:limit]
    )
    return [tuple(check["values"][:2]) for check in checks if len(check.get("values") or ()) == 2]


def budget_source(plugin: MethodPlugin) -> BudgetSource:
    """Where the standard uncertainties of ``plugin``'s inputs come from (see the module docstring)."""
    if getattr(settings, "OLEOTRACE_REPEATABILITY_SOURCE", "plugin") == "lab_duplicates" and plugin.repeatability:
        pairs = lab_duplicate_pairs(plugin.code)
        if len(pairs) >= LAB_PAIRS_NEEDED:
            relative = plugin.repeatability.relative is not None
            s_r = repeatability_from_duplicates(pairs, relative=relative)
            basis = f"the laboratory's own duplicates: pooled s_r from {len(pairs)} accepted pairs"
            return DefaultBudget(lab_repeatability=(s_r, relative, basis))
    return DefaultBudget()


def calibration_u(kind: str, calibration) -> Decimal | None:
    """One reading's standard uncertainty from an instrument's calibration, as QUAM A2 treats it:
    the stated u, else the tolerance as a triangular distribution (a / √6); a mass weighed by
    difference takes the balance's u twice (√2 · u). None when the certificate states neither."""
    if calibration.standard_uncertainty:
        u = Decimal(calibration.standard_uncertainty)
    elif calibration.tolerance:
        u = tolerance_as_u(Decimal(calibration.tolerance))
    else:
        return None
    return weighing_by_difference_u(u) if kind == InstrumentKind.BALANCE else u


# which instrument kinds measure an input in each unit (the unit of their calibration)
MEASURED_BY = {"g": (InstrumentKind.BALANCE,), "mL": (InstrumentKind.BURETTE, InstrumentKind.TITRATOR)}


class TracedBudget:
    """A budget source for a result measured with named instruments and a standardised titrant
    (issue 9): the titrant concentration's u is its standardisation's, a mass's the balance's
    calibration, a titre's the burette's or titrator's; every other term is ``base``'s."""

    def __init__(self, base: BudgetSource, result: Result, uses: Sequence[tuple[Instrument, Calibration]] | None = None):
        """``uses``: the (instrument, calibration) pairs the result was measured with, when
        the caller has them at hand (a result being entered); else they are read."""
        self.base = base
        self.titrant = None
        if result.titrant_uncertainty and result.reagent_lot_id:
            self.titrant = StandardUncertainty(
                float(result.titrant_uncertainty),
                f"standardisation of titrant lot {result.reagent_lot.code} (Eurachem/CITAC QUAM A2)",
            )
        self.by_unit: dict[str, StandardUncertainty] = {}
        if uses is None:
            uses = [(use.instrument, use.calibration) for use in result.instrument_uses.select_related("instrument", "calibration")]
        for instrument, calibration in uses:
            for unit, kinds in MEASURED_BY.items():
                if instrument.kind in kinds and calibration.unit in ("", unit):
                    u = calibration_u(instrument.kind, calibration)
                    if u is not None:
                        basis = f"calibration {calibration.certificate_ref} of {instrument.asset_id} (QUAM A2)"
                        self.by_unit[unit] = StandardUncertainty(float(u), basis)
        self.name = f"{base.name}; titrant and instruments from their standardisation and calibrations"

    def input_uncertainty(self, plugin: MethodPlugin, spec: QuantityInput, value: Decimal | float) -> StandardUncertainty | None:
        if spec.name == TITRANT_INPUT and self.titrant is not None:
            return self.titrant
        if spec.unit in self.by_unit:
            return self.by_unit[spec.unit]
        return self.base.input_uncertainty(plugin, spec, value)

    def repeatability(self, plugin: MethodPlugin, result: float) -> StandardUncertainty | None:
        return self.base.repeatability(plugin, result)


class SourceMeansBudget:
    """A budget source for a derived result (TOTOX from the PV and AnV means): each input's u is
    the standard uncertainty of the source test's mean (its stored budget's u_c), so the sources'
    budgets carry over by the GUM's law of propagation; an input whose source has no stored
    budget takes ``base``'s default."""

    def __init__(self, base: BudgetSource, means: dict[str, tuple[Test, TestUncertainty | None]]):
        self.base = base
        self.by_input: dict[str, StandardUncertainty] = {}
        for name, (test, stored) in means.items():
            if stored is not None:
                basis = f"the mean's budget of {test.method_code} test {test.pk} (u_c = {stored.combined:.3g}, k = 1)"
                self.by_input[name] = StandardUncertainty(float(stored.combined), basis)
        self.name = f"{base.name}; inputs from their source tests' budgets"

    def input_uncertainty(self, plugin: MethodPlugin, spec: QuantityInput, value: Decimal | float) -> StandardUncertainty | None:
        if spec.name in self.by_input:
            return self.by_input[spec.name]
        return self.base.input_uncertainty(plugin, spec, value)

    def repeatability(self, plugin: MethodPlugin, result: float) -> StandardUncertainty | None:
        return self.base.repeatability(plugin, result)


def budget_of(result: Result, plugin: MethodPlugin | None = None, *, source: BudgetSource | None = None) -> Budget | None:
    """The budget of one stored result from its inputs as its plugin took them; None where its
    method is gone or its inputs no longer pass the method's checks. ``source``: where the
    inputs' uncertainties come from, when not the method's own (a derived result's sources)."""
    try:
        plugin = plugin or get_registry().get(result.method_code)
        inputs = stored_inputs(result)
        values = plugin.validate(line_inputs(plugin, result.test.specification_line, inputs))
        source = source or budget_source(plugin)
        if result.reagent_lot_id or result.instrument_uses.exists():
            source = TracedBudget(source, result)
        # a test of one component of a profile ("fac:C18:2"): the budget of that component
        component = split_parameter(result.test.method_code)[1]
        return result_budget(plugin, values, source, given=set(inputs), component=component)
    except (UnknownMethod, MethodInputError):
        return None


def entry_budget(
    result: Result, plugin: MethodPlugin, source: BudgetSource, *, values: Mapping[str, Any] | None = None,
) -> Budget | None:
    """``budget_of`` for a result being entered (not yet stored); no queries. ``source``: the
    budget source traced for what the result is measured with (``traced_source``, which a
    batch's results measured with the same lot and instruments share). ``values``: the
    result's inputs as its plugin validated them when it computed the result
    (``MethodResult.inputs``), so that they are not validated twice."""
    try:
        inputs = stored_inputs(result)
        if values is None:
            values = plugin.validate(line_inputs(plugin, result.test.specification_line, inputs))
        component = split_parameter(result.test.method_code)[1]  # as budget_of: a profile's component
        return result_budget(plugin, values, source, given=set(inputs), component=component)
    except MethodInputError:
        return None


def traced_source(
    source: BudgetSource, result: Result, uses: Sequence[tuple[Instrument, Calibration]], known: dict[tuple, BudgetSource]
) -> BudgetSource:
    """The budget source for ``result`` measured with ``uses`` (the (instrument, calibration)
    pairs), as ``budget_of`` traces it: ``source`` itself when the result names no lot and no
    instrument, else a ``TracedBudget``, taken from ``known`` when a result with the same titrant
    lot, standardisation uncertainty and instrument calibrations made it already (it depends on
    nothing else), else made and kept there."""
    if not (result.reagent_lot_id or uses):
        return source
    key = (id(source), result.reagent_lot_id, result.titrant_uncertainty, tuple((i.pk, c.pk) for i, c in uses))
    if key not in known:
        known[key] = TracedBudget(source, result, uses)
    return known[key]


def stored_budget_fields(budget: Budget) -> dict[str, Any]:
    """The fields of a ``ResultUncertainty`` or ``TestUncertainty`` row that keep ``budget``."""
    return _stored(budget)


def stored_budget_dict(result: Result) -> dict[str, Any] | None:
    """The budget of a stored result as kept (worked out for one entered before budgets were kept)."""
    return _budget_dict(result)


def _stored(budget: Budget) -> dict[str, Any]:
    return {
        "budget": budget.as_dict(), "combined": budget.combined, "coverage_factor": budget.k,
        "expanded": str(budget.expanded), "source": budget.source[:200], "computed_at": timezone.now(),
    }


def result_uncertainty_record(result: Result, aggregate: dict[str, Any] | None, *, source: BudgetSource | None = None) -> None:
    """Store the budget of the just-inserted ``result`` and judge it by its line's decision rule;
    with ``aggregate`` (the test is complete), store the mean's budget and judge the mean too
    (``aggregate["verdict"]`` is replaced in place). Runs in the caller's transaction; each
    stored U is audited, under the user who entered the result. ``source``: as ``budget_of``."""
    test = result.test  # a stability pull is judged against its study's limits (pull_judging)
    refs = {"lot_ref": test.sample.lot_id, "sample_ref": test.sample_id}
    budget = budget_of(result, source=source)
    if budget is None:
        return
    row = ResultUncertainty.objects.create(result=result, **_stored(budget))
    audit_append(result.entered_by, AuditAction.CREATE, row, created(row, AUDITED_FIELDS + ("result",)), **refs)
    verdict = test_verdict(Decimal(result.value_exact), test, budget.expanded)
    if verdict != result.verdict:
        result.verdict = verdict
        result.save(update_fields=["verdict"])
    if aggregate is None:
        return
    current = list(
        Result.objects.filter(test_id=test.pk, status=ResultStatus.CURRENT).select_related("uncertainty", "test__specification_line")
        .order_by("replicate")
    )
    budgets = [_budget_dict(r) for r in current]
    if any(b is None for b in budgets):
        return
    mean = mean_budget(budgets)
    before = TestUncertainty.objects.filter(test_id=test.pk).first()
    fields = {"results": [r.pk for r in current], **_stored(mean)}
    row, _ = TestUncertainty.objects.update_or_create(test_id=test.pk, defaults=fields)
    changes = {
        name: [None if before is None else json_safe(getattr(before, name)), json_safe(getattr(row, name))]
        for name in (*AUDITED_FIELDS, "results")
    }
    audit_append(
        result.entered_by, AuditAction.CREATE if before is None else AuditAction.CHANGE, row, changes,
        reason="the mean of the current replicates", **refs,
    )
    aggregate["verdict"] = test_verdict(Decimal(aggregate["value_exact"]), test, mean.expanded)


def _budget_dict(result: Result) -> dict[str, Any] | None:
    if hasattr(result, "uncertainty"):
        return result.uncertainty.budget
    budget = budget_of(result)  # a result entered before budgets were kept
    return None if budget is None else budget.as_dict()


def is_mean_of(stored_ids, current_ids) -> bool:
    """Whether a mean's budget, stored for the replicates ``stored_ids``, is the budget of the
    mean of exactly the current replicates ``current_ids``."""
    return sorted(stored_ids) == sorted(current_ids)


def fresh_mean_budget(stored: TestUncertainty | None, current_ids) -> TestUncertainty | None:
    """``stored`` if it is the budget of the mean of exactly the current replicates ``current_ids``
    (a correction since makes it stale until the new mean's budget is stored), else None."""
    if stored is None or not is_mean_of(stored.results, current_ids):
        return None
    return stored


def mean_expanded_uncertainty(test: Test) -> str | None:
    """U of the test's mean as stored, if it is the mean of the current replicates."""
    current = test.results.filter(status=ResultStatus.CURRENT).values_list("pk", flat=True)
    fresh = fresh_mean_budget(TestUncertainty.objects.filter(test=test).first(), current)
    return fresh.expanded if fresh else None
