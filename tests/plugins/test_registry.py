"""Plugin discovery (plugins/registry.py): broken plugins are left out with a reason, the rest load.

The broken plugins live in tests/plugins/broken_plugins.py and broken_on_import.py and are
found through importlib.metadata entry points, exactly as an installed package would be.
"""
from __future__ import annotations

from importlib.metadata import EntryPoint, entry_points

import pytest
from django.core import checks

from analyses.checks import rejected_method_plugins
from plugins.contract import ENTRY_POINT_GROUP
from plugins.registry import PluginRegistry, UnknownMethod, get_registry, method_registry
from plugins.saponification import SaponificationValue

HELPERS = "tests.plugins.broken_plugins"


def entry_point(name: str, value: str) -> EntryPoint:
    return EntryPoint(name=name, value=value, group=ENTRY_POINT_GROUP)


def builtin_entry_points() -> list[EntryPoint]:
    return list(entry_points(group=ENTRY_POINT_GROUP))


# entry point name, target, words the rejection reason must contain
BROKEN = [
    ("import_fails", "tests.plugins.broken_on_import:Anything", ["failed to import", "ImportError", "not installed"]),
    ("module_missing", "tests.plugins.no_such_module:Anything", ["failed to import", "ModuleNotFoundError"]),
    ("class_missing", f"{HELPERS}:NoSuchClass", ["failed to import", "NoSuchClass"]),
    ("not_a_plugin", f"{HELPERS}:NotAPlugin", ["not a subclass", "MethodPlugin"]),
    ("sv_copy", f"{HELPERS}:SaponificationCopy", ["repeats method code 'sv'"]),
    ("no_unit", f"{HELPERS}:InputWithoutUnit", ["'sample_volume'", "lacks a unit"]),
    ("unknown_unit", f"{HELPERS}:InputWithUnknownUnit", ["'drops_of_titrant'", "pint does not know"]),
    ("wrong_example", f"{HELPERS}:FailsItsOwnExample", ["fails its worked example 1", "got 2.5", "expected 3"]),
    ("no_examples", f"{HELPERS}:NoExamples", ["no worked examples"]),
    ("example_raises", f"{HELPERS}:ExampleRaises", ["worked example 1", "KeyError"]),
    ("bare_names", f"{HELPERS}:InputsNotSpecs", ["'sample_mass'", "neither a QuantityInput nor a ChoiceInput"]),
    ("bad_code", f"{HELPERS}:LowerCaseCodeOnly", ["'Titre-Per-Gram'", "lower-case identifier"]),
    ("no_compute", f"{HELPERS}:NoCompute", ["does not implement compute()"]),
]


@pytest.mark.parametrize(("name", "target", "words"), BROKEN, ids=[row[0] for row in BROKEN])
def test_broken_plugin_is_rejected_with_a_clear_reason_and_the_rest_load(name, target, words):
    registry = PluginRegistry().load(found=[*builtin_entry_points(), entry_point(name, target)])

    assert registry.codes() == ["anv", "av", "fac", "ffa", "insol", "iv", "mv", "osi", "pv", "smp", "soap", "sv", "totox", "unsap"]
    assert len(registry.rejected) == 1
    rejected = registry.rejected[0]
    assert rejected.entry_point == f"{name} = {target}"
    for word in words:
        assert word in rejected.reason


def test_all_broken_plugins_at_once_leave_the_good_ones_loaded():
    found = [
        *builtin_entry_points(),
        entry_point("titre_per_gram", f"{HELPERS}:TitrePerGram"),
        *(entry_point(name, target) for name, target, _ in BROKEN),
    ]
    registry = PluginRegistry().load(found=found)

    assert registry.codes() == ["anv", "av", "fac", "ffa", "insol", "iv", "mv", "osi", "pv", "smp", "soap", "sv", "titre_per_gram", "totox", "unsap"]
    assert sorted(rejected.entry_point.split(" = ")[0] for rejected in registry.rejected) == sorted(
        name for name, _, _ in BROKEN
    )
    assert registry.get("titre_per_gram").calculate({"sample_mass": "2 g", "sample_volume": "5 mL"}).value == 2.5


def test_the_first_holder_of_a_code_keeps_it():
    registry = PluginRegistry().load(
        found=[*builtin_entry_points(), entry_point("sv_copy", f"{HELPERS}:SaponificationCopy")]
    )
    assert isinstance(registry.get("sv"), SaponificationValue)


def test_a_good_outside_plugin_loads_beside_the_builtins():
    registry = PluginRegistry().load(found=[*builtin_entry_points(), entry_point("tpg", f"{HELPERS}:TitrePerGram")])
    assert "titre_per_gram" in registry
    assert registry.rejected == []


def test_reload_replaces_the_earlier_load():
    registry = PluginRegistry().load(found=[entry_point("not_a_plugin", f"{HELPERS}:NotAPlugin")])
    assert registry.codes() == [] and len(registry.rejected) == 1
    registry.load(found=builtin_entry_points())
    assert registry.codes() == ["anv", "av", "fac", "ffa", "insol", "iv", "mv", "osi", "pv", "smp", "soap", "sv", "totox", "unsap"]
    assert registry.rejected == []


def test_unknown_code_names_the_known_ones():
    with pytest.raises(UnknownMethod) as unknown:
        get_registry().get("nope")
    assert unknown.value.code == "nope"
    assert "anv, av, fac, ffa, insol, iv, mv, osi, pv, smp, soap, sv, totox, unsap" in str(unknown.value)


def test_installed_entry_points_are_the_builtins():
    # pyproject.toml registers the built-ins exactly as an outside package would.
    assert sorted(ep.name for ep in builtin_entry_points()) == ["anv", "av", "fac", "ffa", "insol", "iv", "mv", "osi", "pv", "smp", "soap", "sv", "totox", "unsap"]


def test_system_check_warns_about_a_rejected_plugin(monkeypatch):
    broken = PluginRegistry().load(found=[entry_point("wrong_example", f"{HELPERS}:FailsItsOwnExample")])
    monkeypatch.setattr(method_registry, "rejected", broken.rejected)

    messages = rejected_method_plugins(None)

    assert len(messages) == 1
    message = messages[0]
    assert message.id == "analyses.W001"
    assert "wrong_example" in message.msg and "fails its worked example" in message.msg
    # A Warning, not an Error: manage.py check and the server still start.
    assert isinstance(message, checks.Warning)
    assert message.level == checks.WARNING
    assert not message.is_serious()


def test_system_check_is_registered_and_runs_with_the_others(monkeypatch):
    broken = PluginRegistry().load(found=[entry_point("no_examples", f"{HELPERS}:NoExamples")])
    monkeypatch.setattr(method_registry, "rejected", broken.rejected)

    messages = [m for m in checks.run_checks(tags=[checks.Tags.compatibility]) if m.id == "analyses.W001"]

    assert len(messages) == 1
    assert not any(m.is_serious() for m in messages)


def test_system_check_is_silent_when_every_plugin_loaded():
    get_registry()
    assert method_registry.rejected == []
    assert rejected_method_plugins(None) == []
