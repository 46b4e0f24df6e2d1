"""Default specification limits from the Codex standards, each with its source.

Identity ranges (SV, IV) come from Codex CXS 210 (named vegetable oils); quality limits
from the CXS 210 appendix and CXS 19 (AV, PV) and CXS 33 (olive oils). The values and
their evidence tags are those of shared/references.md: "found" rows were read in copies
of the standard, "from memory" rows were not confirmed.
"""
from __future__ import annotations

from plugins.contract import SpecLimit

CXS_210 = "Codex CXS 210-1999, Standard for Named Vegetable Oils"
CXS_210_QUALITY = "Codex CXS 210-1999 appendix / CXS 19-1981, quality characteristics"
CXS_33 = "Codex CXS 33-1981, Standard for Olive Oils and Olive Pomace Oils"
FOUND = "found"
MEMORY = "from memory"

# oil type -> (SV min, SV max, SV evidence, IV min, IV max, IV evidence)
_IDENTITY: dict[str, tuple[float, float, str, float | None, float | None, str]] = {
    "soybean": (189, 195, FOUND, 124, 139, FOUND),
    "maize": (187, 195, FOUND, 103, 135, FOUND),
    "palm": (190, 209, FOUND, 50.0, 55.0, FOUND),
    "rapeseed_low_erucic": (182, 193, FOUND, 105, 126, FOUND),
    "coconut": (248, 265, FOUND, 6.3, 10.6, FOUND),
    "sunflowerseed": (187, 194, FOUND, 118, 141, MEMORY),
    "sunflowerseed_high_oleic": (182, 194, FOUND, 78, 90, FOUND),
    "palm_olein": (194, 202, MEMORY, 56, None, MEMORY),
    "palm_kernel": (230, 254, MEMORY, 14.1, 21.0, MEMORY),
    "groundnut": (187, 196, MEMORY, 86, 107, MEMORY),
}

OIL_TYPES: tuple[str, ...] = tuple(_IDENTITY) + (
    "refined",
    "cold_pressed",
    "virgin_palm",
    "olive_extra_virgin",
    "olive_virgin",
    "olive_refined",
)


def _identity(column: int) -> tuple[SpecLimit, ...]:
    limits = []
    for oil_type, row in _IDENTITY.items():
        low, high, evidence = row[column], row[column + 1], row[column + 2]
        limits.append(SpecLimit(oil_type, CXS_210, minimum=low, maximum=high, evidence=evidence))
    return tuple(limits)


# Unsaponifiable matter, CXS 210 (g/kg in the standard, here as % m/m: 15 g/kg = 1.5 %), from memory.
_UNSAPONIFIABLE = tuple(
    SpecLimit(oil_type, f"{CXS_210} (unsaponifiable matter, g/kg / 10)", maximum=maximum, evidence=MEMORY)
    for oil_type, maximum in (
        ("soybean", 1.5), ("maize", 2.8), ("palm", 1.2), ("rapeseed_low_erucic", 2.0), ("coconut", 1.5),
        ("sunflowerseed", 1.5), ("palm_kernel", 1.0), ("groundnut", 1.0),
    )
)

# Slip melting point (degC), CXS 210 palm oils, from memory.
_SLIP_MELTING_POINT = (
    SpecLimit("palm", f"{CXS_210} (slip melting point)", minimum=33.0, maximum=39.0, evidence=MEMORY),
    SpecLimit("palm_olein", f"{CXS_210} (slip melting point)", minimum=19.0, maximum=24.0, evidence=MEMORY),
    SpecLimit("palm_kernel", f"{CXS_210} (slip melting point)", minimum=25.0, maximum=28.0, evidence=MEMORY),
)

_QUALITY: dict[str, tuple[SpecLimit, ...]] = {
    "sv": _identity(0),
    "iv": _identity(3),
    "av": (
        SpecLimit("refined", CXS_210_QUALITY, maximum=0.6),
        SpecLimit("cold_pressed", CXS_210_QUALITY, maximum=4.0),
        SpecLimit("virgin_palm", CXS_210_QUALITY, maximum=10.0),
    ),
    "pv": (
        SpecLimit("refined", CXS_210_QUALITY, maximum=10.0),
        SpecLimit("cold_pressed", CXS_210_QUALITY, maximum=15.0),
        SpecLimit("olive_extra_virgin", CXS_33, maximum=20.0, evidence=MEMORY),
        SpecLimit("olive_virgin", CXS_33, maximum=20.0, evidence=MEMORY),
        SpecLimit("olive_refined", CXS_33, maximum=5.0, evidence=MEMORY),
    ),
    # Matter volatile at 105 degC <= 0.2 % m/m for refined oils (CXS 210 appendix, found); Codex names
    # 105 degC, ISO 662 dries at 103 +- 2 degC: the plugin records the oven temperature used.
    "mv": (SpecLimit("refined", CXS_210_QUALITY, maximum=0.2),),
    # Insoluble impurities <= 0.05 % m/m, soap content <= 0.005 % m/m (50 mg/kg) for refined oils
    # (CXS 210 appendix, from memory: shared/references.md "Other quality parameters").
    "insol": (SpecLimit("refined", CXS_210_QUALITY, maximum=0.05, evidence=MEMORY),),
    "soap": (SpecLimit("refined", f"{CXS_210_QUALITY} (0.005 % m/m = 50 mg/kg)", maximum=50, evidence=MEMORY),),
    "unsap": _UNSAPONIFIABLE,
    "smp": _SLIP_MELTING_POINT,
    "ffa": (
        SpecLimit("olive_extra_virgin", CXS_33, maximum=0.8),
        SpecLimit("olive_virgin", CXS_33, maximum=2.0),
        SpecLimit("olive_refined", CXS_33, maximum=0.3),
    ),
}


# What free fatty acids are expressed as, by oil type; every other oil type as oleic.
FFA_BASIS_BY_OIL_TYPE: dict[str, str] = {
    "palm": "palmitic",
    "virgin_palm": "palmitic",
    "palm_olein": "palmitic",
    "palm_kernel": "lauric",
    "coconut": "lauric",
}
FFA_BASIS_SOURCE = (
    "AOCS Ca 5a-40: FFA as oleic, as lauric for coconut and palm kernel oils, as palmitic for palm oil (from memory); "
    "seen in a copy of the Codex CXS 210 palm oil entry (free acids of virgin palm oil as palmitic acid) and in a "
    "coconut oil trade specification (free fatty acids as lauric acid); palm olein as palmitic: common practice, no source"
)
FFA_BASIS_EVIDENCE = MEMORY


def limits_for(method_code: str) -> tuple[SpecLimit, ...]:
    return _QUALITY.get(method_code, ())
