"""Insoluble impurities, ISO 663: dirt and other matter insoluble in n-hexane or light petroleum.

% = residue x 100 / m, in % (m/m): m is the test portion (g), the residue (g) what stays on the
filter after washing with the solvent and drying at 103 degC, weighed by difference on the
filter dried and weighed beforehand.

Where each fact was found: the principle (an excess of n-hexane or light petroleum, filtration,
washing, drying at 103 degC, weighing), the content as a mass fraction in %, and that soaps
(calcium soaps above all) and oxidised fatty acids count as impurities unless another solvent
is agreed: the scope and definitions of ISO 663:2000/2017 (found, in published abstracts).
The test portion of about 20 g is from memory, not confirmed.
"""
from __future__ import annotations

from collections.abc import Mapping
from decimal import Decimal
from typing import Any

from plugins import codex
from plugins.contract import MethodPlugin, MethodScope, QuantityInput, WorkedExample
from plugins.titration import PortionRange, refuse_more_than_portion, sample_mass


class InsolubleImpurities(MethodPlugin):
    code = "insol"
    title = "Insoluble impurities"
    version = "1.0"
    instruments = (("balance",), ("oven",))
    standards = ("ISO 663",)
    inputs = (
        sample_mass(
            "Test portion, about 20 g (from memory, not confirmed)",
            PortionRange("20", "20", "ISO 663: a test portion of about 20 g", evidence="from memory"),
            refuse_beyond=False,  # the portion is from memory: outside it only warns
        ),
        QuantityInput(
            "residue_mass", "g",
            "Residue on the filter after washing with n-hexane or light petroleum and drying at 103 °C "
            "(filter with residue minus the filter dried beforehand)",
            minimum=0.0,
        ),
    )
    result_unit = "%"
    decimals = 3  # refined-oil limits sit at 0.05 %; a third place keeps the residue's weighing
    # No precision figure of ISO 663 was found or is recalled: no repeatability limit.
    repeatability = None
    spec_limits = codex.limits_for("insol")
    scope = (MethodScope(source="ISO 663 (a mass fraction of the test portion)", minimum=0.0, maximum=100.0),)
    # worked examples restate the formula (transcription guards); the independent check (a portion
    # spiked with a known mass of insoluble solid) is in tests/plugins/test_independent_checks.py
    examples = (
        WorkedExample(
            {"sample_mass": 20.0, "residue_mass": 0.0050},
            expected=0.025,
            source="ISO 663 formula applied by hand: 5.0 mg left from 20.0 g is 0.025 %",
        ),
        WorkedExample(
            {"sample_mass": 25.0, "residue_mass": 0.0125},
            expected=0.05,
            source="ISO 663 formula applied by hand: 12.5 mg from 25.0 g is 0.050 %, the Codex refined-oil limit",
        ),
    )
    cautions = (
        "n-Hexane and light petroleum are highly flammable, and n-hexane harms the nerves on repeated "
        "exposure: filter and wash in a fume hood, away from ignition sources, and let the solvent "
        "evaporate before the filter goes into the 103 °C oven. The oven and crucibles are hot. Follow "
        "local regulations, the safety data sheets and the laboratory's own validated procedure."
    )

    def check(self, values: Mapping[str, Any]) -> None:
        refuse_more_than_portion(values, "residue_mass")

    def compute(self, values: Mapping[str, Any]) -> Decimal:
        return values["residue_mass"] * 100 / values["sample_mass"]
