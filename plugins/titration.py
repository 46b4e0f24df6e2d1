"""Inputs shared by the titration methods. Every titration uses the same names."""
from __future__ import annotations

from collections.abc import Mapping
from decimal import Decimal
from typing import Any

from plugins.contract import MethodInputError, QuantityInput

KOH_MOLAR_MASS = Decimal("56.1")  # g/mol as the standards write it (AOCS Cd 3-25, Cd 3d-63; ISO 660, ISO 3657)


def sample_mass(help: str = "Mass of the test portion") -> QuantityInput:
    return QuantityInput("sample_mass", "g", help, minimum=0.0, minimum_inclusive=False)


def sample_volume(help: str = "Titre for the sample") -> QuantityInput:
    return QuantityInput("sample_volume", "mL", help, minimum=0.0)


def blank_volume(help: str = "Titre for the blank", required: bool = True) -> QuantityInput:
    return QuantityInput("blank_volume", "mL", help, minimum=0.0, required=required, default=None if required else 0.0)


def titrant_concentration(help: str = "Concentration of the titrant") -> QuantityInput:
    return QuantityInput("titrant_concentration", "mol/L", help, minimum=0.0, minimum_inclusive=False)


def back_titration_volume(values: Mapping[str, Any]) -> Decimal:
    """B - S for methods that titrate back what the sample did not consume (SV, IV)."""
    difference = values["blank_volume"] - values["sample_volume"]
    if difference < 0:
        raise MethodInputError(
            "sample_volume",
            f"sample titre {values['sample_volume']:g} mL exceeds the blank titre {values['blank_volume']:g} mL; "
            "in a back-titration the sample can only consume reagent",
        )
    return difference


def direct_titration_volume(values: Mapping[str, Any]) -> Decimal:
    """S - B for methods that titrate what the sample released (AV, FFA, PV)."""
    difference = values["sample_volume"] - values.get("blank_volume", 0)
    if difference < 0:
        raise MethodInputError(
            "sample_volume",
            f"sample titre {values['sample_volume']:g} mL is below the blank titre "
            f"{values.get('blank_volume', 0.0):g} mL, which would give a negative result",
        )
    return difference
