"""The decision rule of a specification line in words, with the risk ILAC G8 attaches to it,
for the certificate of analysis (ISO/IEC 17025:2017 7.8.6: the report states the rule).

Risks (ILAC G8:09/2019, found): simple acceptance, up to 50 % probability of false acceptance
for a result at the limit; a guard band w = U (k = 2), below 2.5 %."""
from __future__ import annotations

from decimal import Decimal

from analyses.models import DecisionRule, SpecificationLine

SIMPLE_WORDS = (
    "Simple acceptance: a result inside the specification limit conforms; the measurement uncertainty is "
    "stated but does not move the limit."
)
SIMPLE_RISK = "For a result at the limit the probability of false acceptance is up to 50 % (ILAC G8:09/2019)."


def _band(multiple: Decimal) -> str:
    return "w = U" if multiple == 1 else f"w = {multiple.normalize():f} x U"


def _guarded_risk(multiple: Decimal) -> str:
    if multiple >= 1:
        wider = "" if multiple == 1 else "; a guard band wider than U lowers it further"
        return f"The probability of false acceptance is below 2.5 % (ILAC G8:09/2019, w = U{wider})."
    return "The probability of false acceptance lies between the 2.5 % of w = U and the 50 % of simple acceptance."


def rule_statement(line: SpecificationLine) -> dict[str, str]:
    """``{"rule", "guard_band_multiple", "statement", "risk"}`` for one line."""
    multiple = Decimal(line.guard_band_multiple or "1")
    if line.decision_rule == DecisionRule.GUARD_BAND:
        words = (
            f"Guard band {_band(multiple)} (expanded uncertainty U, k = 2): a result conforms only if it lies "
            f"inside the specification limit by at least w; otherwise it does not conform."
        )
        risk = _guarded_risk(multiple)
    elif line.decision_rule == DecisionRule.NON_BINARY:
        words = (
            f"ILAC G8 non-binary statements with guard band {_band(multiple)} (U, k = 2): pass (inside the limit by "
            "at least w), conditional pass (inside the limit by less than w), conditional fail (outside the limit "
            "by at most w), fail (outside by more than w)."
        )
        risk = (
            f"{_guarded_risk(multiple)[:-1]} for a pass; for a conditional pass up to 50 %. A conditional fail is "
            "treated as out of specification."
        )
    else:
        words, risk = SIMPLE_WORDS, SIMPLE_RISK
    return {
        "rule": line.decision_rule, "guard_band_multiple": line.guard_band_multiple, "statement": words, "risk": risk,
    }
