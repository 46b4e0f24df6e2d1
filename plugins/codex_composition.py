"""Codex CXS 210 fatty-acid composition ranges (% of total fatty acids) per oil type, and the
identity screen that holds a profile against them.

Palm, palm olein and palm kernel oil are "found" (a table reproduced in a peer-reviewed review
citing Codex 2015, shared/references.md); soybean, sunflowerseed and low-erucic rapeseed oil are
"from memory" and say so in every message. "ND" (not detectable) is a range without a minimum.
Only the acids listed here are screened; the standard lists more.
"""
from __future__ import annotations

from collections.abc import Mapping
from decimal import Decimal

from plugins.codex import CXS_210, FOUND, MEMORY
from plugins.contract import ComponentValue, SpecLimit, float_as_decimal, round_half_even

ND = None
_RANGES: dict[str, tuple[str, str, dict[str, tuple[float | None, float]]]] = {
    # oil type: (name in a message, evidence, {acid: (minimum or ND, maximum)})
    "palm": ("palm oil", FOUND, {
        "C12:0": (ND, 0.5), "C14:0": (0.5, 2.0), "C16:0": (39.3, 47.5), "C16:1": (ND, 0.6), "C18:0": (3.5, 6.0),
        "C18:1": (36.0, 44.0), "C18:2": (9.0, 12.0), "C18:3": (ND, 0.5), "C20:0": (ND, 1.0),
    }),
    "palm_olein": ("palm olein", FOUND, {
        "C16:0": (38.0, 43.5), "C18:0": (3.5, 5.0), "C18:1": (39.8, 46.0), "C18:2": (10.0, 13.5),
    }),
    "palm_kernel": ("palm kernel oil", FOUND, {
        "C8:0": (2.4, 6.2), "C10:0": (2.6, 5.0), "C12:0": (45.0, 55.0), "C14:0": (14.0, 18.0), "C16:0": (6.5, 10.0),
        "C18:1": (12.0, 19.0),
    }),
    "soybean": ("soybean oil", MEMORY, {
        "C16:0": (8.0, 13.5), "C18:0": (2.0, 5.4), "C18:1": (17.0, 30.0), "C18:2": (48.0, 59.0), "C18:3": (4.5, 11.0),
    }),
    "sunflowerseed": ("sunflowerseed oil", MEMORY, {
        "C16:0": (5.0, 7.6), "C18:0": (2.7, 6.5), "C18:1": (14.0, 39.4), "C18:2": (48.3, 74.0), "C18:3": (ND, 0.3),
    }),
    "rapeseed_low_erucic": ("rapeseed oil (low erucic acid)", MEMORY, {
        "C16:0": (2.5, 7.0), "C18:1": (51.0, 70.0), "C18:2": (15.0, 30.0), "C18:3": (5.0, 14.0), "C22:1": (ND, 2.0),
    }),
}
SOURCE = f"{CXS_210}, fatty-acid composition (% of total fatty acids)"


def oil_types() -> tuple[str, ...]:
    return tuple(_RANGES)


def ranges_for(oil_type: str) -> dict[str, tuple[float | None, float]]:
    return dict(_RANGES[oil_type][2]) if oil_type in _RANGES else {}


def limits_for(acid: str) -> tuple[SpecLimit, ...]:
    """The default limits of one acid per oil type, as specification lines take them."""
    return tuple(
        SpecLimit(oil_type, SOURCE, minimum=low, maximum=high, evidence=evidence)
        for oil_type, (_, evidence, acids) in _RANGES.items()
        if acid in acids
        for low, high in [acids[acid]]
    )


def _written(limit: float, places: int) -> Decimal:
    return round_half_even(float_as_decimal(limit), places)


def identity_warnings(profile: Mapping[str, ComponentValue], oil_type: str) -> list[str]:
    """One warning per acid outside the declared oil's range ("C18:2 62.1 % is above the 59.0 %
    maximum for soybean oil"); an oil type without ranges is said, never passed in silence."""
    if not oil_type:
        return ["identity screen not run: the product declares no oil type (Codex CXS 210 ranges are per oil)"]
    if oil_type not in _RANGES:
        held = ", ".join(sorted(_RANGES))
        return [f"identity screen not run: no Codex CXS 210 composition ranges are held for oil type {oil_type} (held: {held})"]
    name, evidence, acids = _RANGES[oil_type]
    tag = "Codex CXS 210" if evidence == FOUND else "Codex CXS 210, from memory, not confirmed"
    warnings = []
    for acid, (low, high) in acids.items():
        part = profile.get(acid)
        if part is None:
            continue
        shown = f"{acid} {part.reported} %" if part.detected else f"{acid} not detected (no peak given)"
        if low is not None and part.exact < float_as_decimal(low):
            warnings.append(f"{shown} is below the {_written(low, part.decimals)} % minimum for {name} ({tag})")
        elif part.exact > float_as_decimal(high):
            warnings.append(f"{shown} is above the {_written(high, part.decimals)} % maximum for {name} ({tag})")
    return warnings
