"""Review warnings: what a reviewer should weigh about a result that is no reason to refuse it.

A result outside the range its method's source validates (``MethodPlugin.scope``), a
prescribed blank that was not run or was too large (``MethodPlugin.blank``), and an input
outside its plausible range (``QuantityInput.plausible_minimum``/``plausible_maximum``: a
test portion the standard's table does not give, a titre beyond one burette filling) are
kept, judged against the specification as usual, and carry these warnings to the review
queue and the lot's readiness. They never block release.
"""
from __future__ import annotations

from collections.abc import Mapping
from typing import Any

from plugins.blanks import blank_warnings
from plugins.contract import MethodInputError, MethodPlugin, MethodScope, QuantityInput


def _range(scope: MethodScope) -> str:
    low = "" if scope.minimum is None else f"{scope.minimum:g}"
    high = "" if scope.maximum is None else f"{scope.maximum:g}"
    if low and high:
        return f"{low} to {high}" if scope.maximum_inclusive else f"{low} to below {high}"
    if high:
        return f"up to {high}" if scope.maximum_inclusive else f"below {high}"
    return f"from {low}"


def scope_warnings(plugin: MethodPlugin, value: Any, unit: str | None = None) -> list[str]:
    """One warning per declared scope that ``value`` (in the result unit) falls outside."""
    warnings = []
    unit = unit or plugin.result_unit
    for scope in plugin.scope:
        if scope.contains(value):
            continue
        tag = "" if scope.evidence == "found" else f" ({scope.evidence})"
        note = f"; {scope.note}" if scope.note else ""
        warnings.append(
            f"{plugin.title} {plugin.report(value)} {unit} is outside {_range(scope)} {unit}, "
            f"the range of {scope.source}{tag}{note}"
        )
    return warnings


def input_warnings(plugin: MethodPlugin, values: Mapping[str, Any]) -> list[str]:
    """One warning per quantity input of validated ``values`` outside its plausible range, naming it."""
    warnings = []
    for spec in plugin.inputs:
        value = values.get(spec.name)
        if isinstance(spec, QuantityInput) and value is not None and not isinstance(value, str):
            warning = spec.implausible(value)
            if warning:
                warnings.append(warning)
    return warnings


def raw_input_warnings(plugin: MethodPlugin, raw: Mapping[str, Any]) -> list[str]:
    """As :func:`input_warnings`, for inputs as stored (numbers or quantity strings such as
    "2015 mg"), each read on its own; an input that no longer reads is left to the test's warnings."""
    values = {}
    for spec in plugin.inputs:
        given = raw.get(spec.name)
        if not isinstance(spec, QuantityInput) or not spec.has_plausible_range() or given is None:
            continue
        try:
            values[spec.name] = spec.parse_exact(given)
        except MethodInputError:
            continue
    return input_warnings(plugin, values)


def review_warnings(plugin: MethodPlugin, values: Mapping[str, Any], value: Any, unit: str | None = None) -> list[str]:
    """Warnings for one determination: its validated ``values`` (their plausible ranges and
    the blank) and its result."""
    return input_warnings(plugin, values) + blank_warnings(plugin.blank, values) + scope_warnings(plugin, value, unit)
