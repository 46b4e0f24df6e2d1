"""The traceability block of the contract: titrants and instrument kinds each plugin declares."""
from __future__ import annotations

import pytest

from analyses.models import InstrumentKind, TitrantSubstance
from plugins.contract import INSTRUMENT_KINDS, TITRATION_INSTRUMENTS, TITRANT_INPUT
from plugins.registry import get_registry, plugin_problem
from tests.plugins.broken_plugins import TitrePerGram

PLUGINS = get_registry().all()


def test_contract_kinds_are_the_instrument_registers_kinds():
    assert set(INSTRUMENT_KINDS) == set(InstrumentKind.values)


@pytest.mark.parametrize("plugin", PLUGINS, ids=lambda p: p.code)
def test_titrants_are_known_substances_fed_through_the_titrant_input(plugin):
    assert set(plugin.titrants) <= set(TitrantSubstance.values)
    names = {spec.name for spec in plugin.inputs}
    assert bool(plugin.titrants) == (TITRANT_INPUT in names)


@pytest.mark.parametrize("plugin", PLUGINS, ids=lambda p: p.code)
def test_every_builtin_names_its_instruments_and_a_balance(plugin):
    if plugin.derived_from:  # worked out from other results (TOTOX): it measures nothing
        assert plugin.instruments == () and plugin.titrants == ()
        return
    assert plugin.instruments
    # the slip melting point weighs nothing (AOCS Cc 3-25 fills its tubes by dipping, found): a thermometer only
    if plugin.code == "smp":
        assert plugin.instruments == (("thermometer",),)
    else:
        assert ("balance",) in plugin.instruments


@pytest.mark.parametrize(
    ("code", "titrants", "instruments"),
    [
        ("av", ("KOH", "NaOH"), TITRATION_INSTRUMENTS),
        ("sv", ("HCl",), TITRATION_INSTRUMENTS),
        ("iv", ("Na2S2O3",), TITRATION_INSTRUMENTS),
        ("pv", ("Na2S2O3",), TITRATION_INSTRUMENTS),
        ("anv", (), (("balance",), ("spectrophotometer",))),
        ("soap", ("HCl",), TITRATION_INSTRUMENTS),  # Cc 17-95 titrates with HCl (found)
        ("unsap", ("NaOH",), TITRATION_INSTRUMENTS),
        ("mv", (), (("balance",), ("oven",))),
        ("insol", (), (("balance",), ("oven",))),
        ("osi", (), (("balance",), ("oxidative_stability",))),
        ("smp", (), (("thermometer",),)),
    ],
)
def test_declarations_of_the_issue(code, titrants, instruments):
    plugin = get_registry().get(code)
    assert plugin.titrants == titrants and plugin.instruments == instruments
    described = plugin.describe()
    assert described["titrants"] == list(titrants)
    assert described["instruments"] == [{"any_of": list(need)} for need in instruments]


def test_titrants_without_the_titrant_input_are_refused():
    class NoInput(TitrePerGram):
        titrants = ("KOH",)

    assert "titrant_concentration" in plugin_problem(NoInput)


@pytest.mark.parametrize("need", [("microscope",), "balance", ()])
def test_unknown_instrument_kinds_are_refused(need):
    class Odd(TitrePerGram):
        instruments = (need,)

    assert "instrument need" in plugin_problem(Odd)
