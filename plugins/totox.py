"""TOTOX value: the total oxidation of an oil from its peroxide and p-anisidine values.

TOTOX = 2 · PV + AnV, PV in meq O2/kg (found, shared/references.md). It is a specification
parameter of the sample, worked out from its PV and AnV test means (``derived_from``), never
entered: ``analyses.services.derived_tests`` records it when both means stand and withdraws it
when either is cleared (sent back, corrected before acceptance, invalidated). It measures
nothing itself; the cautions of its two source methods apply.
"""
from __future__ import annotations

from collections.abc import Mapping
from decimal import Decimal
from typing import Any

from plugins.anisidine import UnitlessInput
from plugins.contract import MethodPlugin, WorkedExample
from plugins.default_budget import UnitDefault


class TotoxValue(MethodPlugin):
    code = "totox"
    title = "TOTOX value (2 PV + AnV)"
    version = "1.0"
    standards = ("AOCS Cd 18-90 (TOTOX = 2 PV + AnV)",)
    inputs = (
        UnitlessInput("peroxide_value", "dimensionless", "The sample's peroxide value, meq O2/kg (its PV test's mean)", minimum=0.0),
        UnitlessInput("anisidine_value", "dimensionless", "The sample's p-anisidine value (its AnV test's mean)", minimum=0.0),
    )
    derived_from = {"peroxide_value": "pv", "anisidine_value": "anv"}
    result_unit = "(dimensionless)"
    decimals = 1
    replicates = 1  # one value from two means: nothing is repeated
    cautions = "Worked out from the PV and AnV results; see those methods' cautions (chloroform or iso-octane, acetic acid, p-anisidine)."
    # The inputs are the source tests' means, unrounded: a recorded TOTOX takes each input's u from
    # its source's stored budget (analyses.services.uncertainty.SourceMeansBudget). These 1 %
    # defaults serve only where a source has none, and `calc` (common practice, no source).
    default_uncertainties = {
        "peroxide_value": UnitDefault("the PV mean, 1 % relative (common practice, no source)", relative=0.01),
        "anisidine_value": UnitDefault("the AnV mean, 1 % relative (common practice, no source)", relative=0.01),
    }
    examples = (
        WorkedExample({"peroxide_value": "2.5", "anisidine_value": "4.0"}, expected=9.0,
                      source="TOTOX = 2 x 2.5 + 4.0 = 9.0 (the definition, found)"),
        WorkedExample({"peroxide_value": "4.98", "anisidine_value": "10.05"}, expected=20.01, tolerance=0.005,
                      source="TOTOX = 2 x 4.98 + 10.05 = 20.01 (the definition, found)"),
    )

    def compute(self, values: Mapping[str, Any]) -> Decimal:
        return 2 * values["peroxide_value"] + values["anisidine_value"]
