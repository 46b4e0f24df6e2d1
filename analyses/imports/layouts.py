"""The two generic layouts a mapping can describe, designed here (no instrument maker's format).

Titrator table: one row per replicate titration.

    sample | method | titre | blank | sample mass | titrant lot | instruments

GC table: one row per peak of a sample's fatty-acid methyl-ester run.

    sample | component | area (or area %)

A mapping names the column heading of each role. Roles marked required must be mapped;
the others are optional (a method that needs a blank still refuses a row without one).
"""
from __future__ import annotations

from dataclasses import dataclass


@dataclass(frozen=True)
class Role:
    name: str
    required: bool
    method_input: str | None  # the plugin input the cell feeds, if any
    help: str


TITRATOR_ROLES: tuple[Role, ...] = (
    Role("sample", True, None, "the sample's label"),
    Role("method", True, None, "the method code (av, pv, sv, iv, ffa …)"),
    Role("titre", True, "sample_volume", "titrant volume for the test portion, mL"),
    Role("titrant_lot", True, None, "the titrant lot's code"),
    Role("blank", False, "blank_volume", "titrant volume for the blank, mL"),
    Role("sample_mass", False, "sample_mass", "test portion mass, g"),
    Role("instruments", False, None, "asset ids, separated by ';'"),
)

GC_ROLES: tuple[Role, ...] = (
    Role("sample", True, None, "the sample's label"),
    Role("component", True, None, "the fatty acid in the trade's shorthand (C16:0, C18:1, C18:1t …)"),
    Role("area", True, None, "peak area, or area %"),
)

LAYOUT_ROLES: dict[str, tuple[Role, ...]] = {"titrator": TITRATOR_ROLES, "gc": GC_ROLES}

INSTRUMENT_SEPARATOR = ";"
