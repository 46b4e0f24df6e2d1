"""Small plugins for the registry tests: one that keeps the contract, and broken ones.

The method is invented for the tests (a titre per gram of sample); the numbers are plain
arithmetic. Each broken class breaks exactly one rule of plugins/contract.py.
"""
from __future__ import annotations

from plugins.contract import MethodPlugin, QuantityInput, WorkedExample

MASS = QuantityInput("sample_mass", "g", "Test portion", minimum=0.0, minimum_inclusive=False)
VOLUME = QuantityInput("sample_volume", "mL", "Titre", minimum=0.0)


class TitrePerGram(MethodPlugin):
    """Keeps the contract: mL of titrant per gram of sample (invented for the tests)."""

    code = "titre_per_gram"
    title = "Titre per gram (test method)"
    version = "0.1"
    standards = ("invented for the tests",)
    inputs = (MASS, VOLUME)
    result_unit = "mL/g"
    decimals = 2
    examples = (WorkedExample({"sample_mass": 2.0, "sample_volume": 5.0}, expected=2.5, source="5.0 mL / 2.0 g"),)

    def compute(self, values):
        return values["sample_volume"] / values["sample_mass"]


class NotAPlugin:
    """Has the right attributes but does not subclass MethodPlugin."""

    code = "not_a_plugin"
    title = "Not a plugin"

    def compute(self, values):
        return 1.0


class SaponificationCopy(TitrePerGram):
    """Claims the built-in code "sv"."""

    code = "sv"


class InputWithoutUnit(TitrePerGram):
    code = "no_unit"
    inputs = (MASS, QuantityInput("sample_volume", "", "Titre with no unit"))


class InputWithUnknownUnit(TitrePerGram):
    code = "unknown_unit"
    inputs = (MASS, QuantityInput("sample_volume", "drops_of_titrant", "Titre in an unknown unit"))


class FailsItsOwnExample(TitrePerGram):
    code = "wrong_example"
    examples = (WorkedExample({"sample_mass": 2.0, "sample_volume": 5.0}, expected=3.0, source="deliberately wrong"),)


class NoExamples(TitrePerGram):
    code = "no_examples"
    examples = ()


class ExampleRaises(TitrePerGram):
    """compute() fails with an error that is not an input error."""

    code = "example_raises"

    def compute(self, values):
        return {}["missing key"]


class InputsNotSpecs(TitrePerGram):
    """Lists input names instead of QuantityInput / ChoiceInput objects."""

    code = "bare_names"
    inputs = ("sample_mass", "sample_volume")


class LowerCaseCodeOnly(TitrePerGram):
    code = "Titre-Per-Gram"


class NoCompute(MethodPlugin):
    code = "no_compute"
    title = "No compute"
    version = "0.1"
    standards = ("invented for the tests",)
    inputs = (MASS,)
    result_unit = "g"
    decimals = 1
    examples = (WorkedExample({"sample_mass": 2.0}, expected=2.0, source="identity"),)
