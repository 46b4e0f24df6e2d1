"""Blank determinations a method prescribes: the blank titre, or an explicit record that none was run.

A plugin whose ``blank`` rule is ``prescribed`` takes ``blank_volume`` (no default) and the flag
``blank_not_run``. One of the two must be given: a missing blank is refused, a blank the analyst
says was not run is accepted, computed without a blank correction, and flagged for review
(``plugins.review_warnings``).
"""
from __future__ import annotations

from collections.abc import Mapping
from decimal import Decimal
from typing import Any

from plugins.contract import BlankRule, FlagInput, MethodInputError, QuantityInput, flag_input
from plugins.titration import titre

BLANK_NOT_RUN = "blank_not_run"


def prescribed_blank_inputs(help: str) -> tuple[QuantityInput, FlagInput]:
    """``blank_volume`` without a default, and the ``blank_not_run`` flag."""
    return (
        titre("blank_volume", help, required=False),
        flag_input(BLANK_NOT_RUN, "true when no blank was run (recorded, and shown to the reviewer); leave out blank_volume then"),
    )


def blank_not_run(values: Mapping[str, Any]) -> bool:
    return values.get(BLANK_NOT_RUN) == "true"


def check_blank_declared(rule: BlankRule | None, values: Mapping[str, Any]) -> None:
    """Refuse inputs that neither give the prescribed blank nor say it was not run, or do both."""
    if rule is None or not rule.prescribed:
        return
    given = values.get("blank_volume") is not None
    if blank_not_run(values) and given:
        raise MethodInputError(BLANK_NOT_RUN, "is true, but a blank titre was given; give one or the other")
    if not given and not blank_not_run(values):
        raise MethodInputError(
            "blank_volume",
            f"is required: {rule.source} prescribes a blank determination; "
            f"enter its titre, or set {BLANK_NOT_RUN}=true to record that none was run",
        )


def _exact(value: Any) -> Decimal:
    return value if isinstance(value, Decimal) else Decimal(str(value))


def blank_warnings(rule: BlankRule | None, values: Mapping[str, Any]) -> list[str]:
    """Review warnings about the blank: prescribed but not run, or above the source's limit."""
    if rule is None:
        return []
    if rule.prescribed and blank_not_run(values):
        return [f"no blank was run, although {rule.source} prescribes one; the result is not blank-corrected"]
    blank, concentration = values.get("blank_volume"), values.get("titrant_concentration")
    if rule.limit_mmol is None or blank is None or concentration is None:
        return []
    # mL x mol/L = mmol; compared exactly, so a blank at the limit is not "above" it by float noise
    amount = _exact(blank) * _exact(concentration)
    if amount > _exact(rule.limit_mmol):
        return [
            f"blank titre {_exact(blank)} mL of {_exact(concentration)} mol/L titrant is {amount.normalize():f} mmol, "
            f"more than the {_exact(rule.limit_mmol).normalize():f} mmol that {rule.limit_source} allows"
        ]
    return []
