"""Stateless calculation of one determination, shared by the CLI and the API.

Given limits (or a Codex oil type for the method's default limits), the result is also
judged, exactly as a result entered against a specification line would be.
"""
from __future__ import annotations

from collections.abc import Mapping
from dataclasses import dataclass
from decimal import Decimal
from typing import Any

from analyses.errors import InvalidInput, NotFound
from analyses.models import Comparison
from analyses.services.specifications import limits_given_or_codex
from analyses.services.verdicts import verdict_for
from plugins.contract import MethodInputError, MethodPlugin, MethodResult, split_parameter
from plugins.registry import UnknownMethod, get_registry
from plugins.review_warnings import review_warnings


@dataclass(frozen=True)
class CalculationLimits:
    minimum: str  # as written, "" where none
    maximum: str
    comparison: str
    source: str  # "" for limits the caller gave


@dataclass(frozen=True)
class Calculation:
    result: MethodResult
    limits: CalculationLimits | None
    verdict: str | None
    review_warnings: list[str]  # scope, blank: what a reviewer would be warned of; never a refusal

    def as_dict(self) -> dict[str, Any]:
        out = self.result.as_dict()
        out["limits"] = None if self.limits is None else {
            "minimum": self.limits.minimum or None,
            "maximum": self.limits.maximum or None,
            "comparison": self.limits.comparison,
            "source": self.limits.source,
        }
        out["verdict"] = self.verdict
        out["review_warnings"] = self.review_warnings
        return out


def _limits(
    plugin: MethodPlugin, minimum: Any, maximum: Any, oil_type: str | None, comparison: str | None, component: str = ""
) -> CalculationLimits | None:
    low, high, source = limits_given_or_codex(
        plugin, minimum, maximum, oil_type or "", fields=("minimum", "maximum", "oil_type"), component=component
    )
    chosen = comparison or Comparison.ABSOLUTE
    if chosen not in Comparison.values:
        raise InvalidInput.for_field("comparison", f"must be one of {', '.join(Comparison.values)}")
    if not low and not high:
        if comparison:
            raise InvalidInput.for_field("comparison", "needs a minimum, a maximum or an oil type to compare with")
        return None
    if low and high and Decimal(low) > Decimal(high):
        raise InvalidInput.for_field("maximum", f"must not be below the minimum {low}")
    return CalculationLimits(low, high, chosen, source)


def calculation_run(
    method_code: str,
    inputs: Mapping[str, Any],
    *,
    minimum: Any = None,
    maximum: Any = None,
    oil_type: str | None = None,
    comparison: str | None = None,
) -> Calculation:
    """Validate ``inputs`` for the method and compute one result; nothing is stored. With
    limits, judge it as a specification line would (exact decimal arithmetic, ASTM E29)."""
    try:
        plugin = get_registry().get(method_code)
    except UnknownMethod as exc:
        raise NotFound(str(exc)) from None
    component = split_parameter(method_code)[1]
    if plugin.components and not component:
        component = plugin.headline  # "fac" alone is judged on its headline (the calculated IV)
    limits = _limits(plugin, minimum, maximum, oil_type, comparison, component)
    try:
        result = plugin.calculate(inputs).component(component)
    except MethodInputError as exc:
        raise InvalidInput.for_field(exc.field, exc.reason) from None
    verdict = None
    if limits is not None:
        verdict = verdict_for(
            result.judged,
            minimum=Decimal(limits.minimum) if limits.minimum else None,
            maximum=Decimal(limits.maximum) if limits.maximum else None,
            comparison=limits.comparison,
        )
    warnings = review_warnings(plugin, result.inputs, result.judged, result.unit)
    if plugin.components:
        warnings += plugin.profile_warnings(result, oil_type or "")
    return Calculation(result, limits, verdict, warnings)
