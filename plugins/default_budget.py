"""The per-method default uncertainty budget: the budget source used until reagent lots and
instruments carry their own uncertainties (traceability).

Each quantity input gets a standard uncertainty by its unit, unless the plugin declares its own
in ``default_uncertainties`` (plugins.contract). The repeatability is the plugin's (its limit r
over 2.8), or, where given, the laboratory's own duplicates (``lab_repeatability``: s_r and
whether it is relative, with the words saying where it came from).
"""
from __future__ import annotations

from dataclasses import dataclass
from decimal import Decimal
from typing import TYPE_CHECKING

from plugins.contract import QuantityInput
from plugins.uncertainty import StandardUncertainty, repeatability_sd

if TYPE_CHECKING:
    from plugins.contract import MethodPlugin


@dataclass(frozen=True)
class UnitDefault:
    """An absolute ``u`` in the input's unit, or a ``relative`` one (fraction of the value)."""

    basis: str
    u: float | None = None
    relative: float | None = None

    def at(self, value: Decimal | float) -> StandardUncertainty:
        u = self.u if self.u is not None else abs(float(value)) * float(self.relative or 0)
        return StandardUncertainty(u, self.basis)


DEFAULTS_BY_UNIT: dict[str, UnitDefault] = {
    # A 0.1 mg analytical balance weighing oil by difference: two readings of s ~ 0.1 mg each
    # (0.14 mg) plus drainage of the oil film and static: 0.2 mg. Common practice, no source.
    "g": UnitDefault("default budget: 0.1 mg analytical balance, weighing by difference (common practice, no source)", u=0.0002),
    # One titre read from a piston burette or titrator: QUAM example A2 gives u(V_T) = 0.013 mL for an
    # 18.64 mL titre (calibration and temperature; Eurachem/CITAC QUAM, found).
    "mL": UnitDefault("default budget: one titre, u as in QUAM example A2 (found)", u=0.013),
    # A titrant standardised against a primary standard: QUAM A2 reaches 0.097 % relative (found).
    "mol/L": UnitDefault("default budget: standardised titrant, 0.1 % relative as in QUAM example A2 (found)", relative=0.001),
    # Photometric accuracy of a UV-VIS spectrophotometer near 0.3-1 A: +-0.005 A rectangular, about
    # 0.003 A. Common practice, no source.
    "dimensionless": UnitDefault("default budget: spectrophotometer absorbance, 0.003 A (common practice, no source)", u=0.003),
    # A calibrated thermometer with 0.2 degC divisions, read to half a division: about 0.1 degC with its
    # calibration (slip melting point, oven temperature). Common practice, no source.
    "degC": UnitDefault("default budget: calibrated thermometer reading, 0.1 °C (common practice, no source)", u=0.1),
    # An oxidative stability instrument's end point (OSI, AOCS Cd 12b-92): 2 % of the induction time for the
    # algorithm's placing of the maximum of the second derivative. Common practice, no source.
    "h": UnitDefault("default budget: stability instrument end point, 2 % relative (common practice, no source)", relative=0.02),
}


class DefaultBudget:
    """The default budget source (see the module docstring)."""

    name = "default budget (per method; no traceability records yet)"

    def __init__(self, lab_repeatability: tuple[float, bool, str] | None = None):
        self.lab_repeatability = lab_repeatability

    def input_uncertainty(self, plugin: MethodPlugin, spec: QuantityInput, value: Decimal | float) -> StandardUncertainty | None:
        declared = plugin.default_uncertainties.get(spec.name)
        default = declared if declared is not None else DEFAULTS_BY_UNIT.get(spec.unit)
        return None if default is None else default.at(value)

    def repeatability(self, plugin: MethodPlugin, result: float) -> StandardUncertainty | None:
        if self.lab_repeatability is not None:
            s_r, relative, basis = self.lab_repeatability
            return StandardUncertainty(abs(result) * s_r if relative else s_r, basis)
        s_r = repeatability_sd(plugin, result)
        if s_r is None:
            return None
        return StandardUncertainty(s_r, f"plugin repeatability r / 2.8 (ISO 5725-6, from memory); r: {plugin.repeatability.source}")
