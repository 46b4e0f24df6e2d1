"""Stateless calculation of one determination, shared by the CLI and the API."""
from __future__ import annotations

from collections.abc import Mapping
from typing import Any

from analyses.errors import InvalidInput, NotFound
from plugins.contract import MethodInputError, MethodResult
from plugins.registry import UnknownMethod, get_registry
from plugins.review_warnings import review_warnings


def calculation_run(method_code: str, inputs: Mapping[str, Any]) -> MethodResult:
    """Validate ``inputs`` for the method and compute one result; nothing is stored."""
    try:
        plugin = get_registry().get(method_code)
    except UnknownMethod as exc:
        raise NotFound(str(exc)) from None
    try:
        return plugin.calculate(inputs)
    except MethodInputError as exc:
        raise InvalidInput.for_field(exc.field, exc.reason) from None


def calculation_review_warnings(result: MethodResult) -> list[str]:
    """What a reviewer would be warned of for this determination (scope, blank); never a refusal."""
    plugin = get_registry().get(result.code)
    return review_warnings(plugin, result.inputs, result.value, result.unit)
