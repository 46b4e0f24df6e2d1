"""Review warnings: what a reviewer should weigh about a result that is no reason to refuse it.

A result outside the range its method's source validates (``MethodPlugin.scope``), and a
prescribed blank that was not run or was too large (``MethodPlugin.blank``), are kept,
judged against the specification as usual, and carry these warnings to the review queue
and the lot's readiness. They never block release.
"""
from __future__ import annotations

from collections.abc import Mapping
from typing import Any

from plugins.blanks import blank_warnings
from plugins.contract import MethodPlugin, MethodScope


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


def review_warnings(plugin: MethodPlugin, values: Mapping[str, Any], value: Any, unit: str | None = None) -> list[str]:
    """Warnings for one determination: its validated ``values`` (for the blank) and its result."""
    return blank_warnings(plugin.blank, values) + scope_warnings(plugin, value, unit)
