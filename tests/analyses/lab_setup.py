"""Shared fixtures for the domain tests: one user per role, an invented product with an
approved specification built from the plugins' Codex defaults, a lot and samples.

Import into a conftest with ``from tests.analyses.lab_setup import *``.
"""
from __future__ import annotations

from decimal import Decimal

import pytest

from analyses.models import Test
from analyses.services.assignments import test_assign_bulk
from analyses.services.lots import lot_create
from analyses.services.results import result_record
from analyses.services.samples import sample_receive, sample_register
from analyses.services.specifications import specification_approve, specification_create
from tests.factories import ProductFactory, ReagentKindFactory, UserFactory, usable_instrument, usable_titrant_lot

# What the entries are measured with (issue 9): the bench fixture's titrant lots, standardised
# to exactly the concentrations the inputs below were written for, and its instruments.
# AV titrates with KOH 0.1 mol/L, PV with thiosulfate 0.002 mol/L; both weigh on a balance and
# read a burette.
TRACE = {
    "av": {"titrant_lot": "KOH-BENCH", "instruments": ["BAL-BENCH", "BUR-BENCH"]},
    "pv": {"titrant_lot": "THIO-BENCH", "instruments": ["BAL-BENCH", "BUR-BENCH"]},
}
AV_TRACE = TRACE["av"]
PV_TRACE = TRACE["pv"]

# Acid value inputs (ISO 660 / AOCS Cd 3d-63: AV = (S - B) * c * 56.1 / m), c = 0.1 mol/L from KOH-BENCH.
# (1.30 - 0.05) * 0.1 * 56.1 / 20.0 = 0.350625 mg KOH/g: the plugin's own worked example.
AV_LOW = {"sample_mass": "20.0", "sample_volume": "1.30", "blank_volume": "0.05"}
# (1.33 - 0.05) * 0.1 * 56.1 / 20.0 = 0.35904; within 5 % of the mean of the pair (from memory, ISO 660)
AV_LOW_TWIN = {"sample_mass": "20.0", "sample_volume": "1.33", "blank_volume": "0.05"}
# (2.50 - 0.05) * 0.1 * 56.1 / 20.0 = 0.687225, above the Codex 0.6 limit for refined oils (CXS 210, found)
AV_HIGH = {"sample_mass": "20.0", "sample_volume": "2.50", "blank_volume": "0.05"}
AV_HIGH_TWIN = {"sample_mass": "20.0", "sample_volume": "2.52", "blank_volume": "0.05"}
# Peroxide value, AOCS Cd 8b-90 (c = 0.002 mol/L from THIO-BENCH): 12.45 mL * 0.002 mol/L * 1000 / 5.0 g = 4.98 meq O2/kg (plugin's worked example)
PV_LOW = {"sample_mass": "5.0", "sample_volume": "12.5", "blank_volume": "0.05"}
PV_LOW_TWIN = {"sample_mass": "5.0", "sample_volume": "12.7", "blank_volume": "0.05"}

INPUTS = {"av": (AV_LOW, AV_LOW_TWIN), "pv": (PV_LOW, PV_LOW_TWIN)}


# Bench titrant lots by (substance, concentration in mol/L), each standardised to exactly that
# concentration, for tests whose inputs were written for another titrant strength.
BENCH_LOTS = {
    ("KOH", "0.1"): "KOH-BENCH",
    ("NaOH", "0.1"): "NAOH-0.1-BENCH",
    ("HCl", "0.5"): "HCL-0.5-BENCH",
    ("Na2S2O3", "0.1"): "THIO-0.1-BENCH",
    ("Na2S2O3", "0.01"): "THIO-0.01-BENCH",
    ("Na2S2O3", "0.002"): "THIO-BENCH",
}
BENCH_INSTRUMENTS = {"BAL-BENCH": "balance", "BUR-BENCH": "burette", "UV-BENCH": "spectrophotometer"}


@pytest.fixture(autouse=True)
def bench(db, request):
    """The titrant lots and instruments of ``TRACE`` and ``BENCH_LOTS``, usable: in date,
    standardised, calibrated and checked (autouse: every test of these directories may enter
    results). Recorded by the ``users`` fixture's manager when the test has it, so that the
    bench adds no users of its own there."""
    keeper = request.getfixturevalue("users")["manager"] if "users" in request.fixturenames else UserFactory(username="bench-keeper")
    made = {}
    for (substance, concentration), code in BENCH_LOTS.items():
        kind = ReagentKindFactory(
            name=f"{substance} {concentration} mol/L", substance=substance, nominal_concentration=concentration, created_by=keeper
        )
        made[code] = usable_titrant_lot(code, kind=kind, concentration=concentration, by=keeper)
    for asset_id, kind in BENCH_INSTRUMENTS.items():
        made[asset_id] = usable_instrument(asset_id, kind, by=keeper)
    return made


def entry(method_code: str, inputs: dict) -> dict:
    """``result_record`` keywords for inputs written with a typed ``titrant_concentration``:
    the inputs without it, and the bench lot standardised to that concentration (issue 9:
    entry takes the concentration from the lot), with the bench instruments."""
    from plugins.registry import get_registry

    plugin = get_registry().get(method_code)
    given = dict(inputs)
    typed = given.pop("titrant_concentration", None)
    keywords: dict = {"inputs": given, "instruments": ["BAL-BENCH", "UV-BENCH" if method_code == "anv" else "BUR-BENCH"]}
    if plugin.titrants:
        concentration = str(typed)
        code = next(c for (substance, strength), c in BENCH_LOTS.items() if substance in plugin.titrants and Decimal(strength) == Decimal(concentration))
        keywords["titrant_lot"] = code
    return keywords


@pytest.fixture
def users(db):
    """One user per role, plus "nobody" in no group."""
    return {
        "manager": UserFactory(username="manager", roles=["lab_manager"]),
        "analyst": UserFactory(username="analyst", roles=["analyst"]),
        "analyst2": UserFactory(username="analyst2", roles=["analyst"]),
        "qa": UserFactory(username="qa", roles=["qa_reviewer"]),
        "admin": UserFactory(username="admin", roles=["admin"]),
        "nobody": UserFactory(username="nobody"),
    }


@pytest.fixture
def product(users):
    return ProductFactory(code="RSO", name="Refined soybean oil", oil_type="soybean", created_by=users["manager"])


@pytest.fixture
def specification(users, product):
    """Approved: AV and PV from the Codex refined-oil defaults (CXS 210 appendix / CXS 19,
    found: AV <= 0.6 mg KOH/g, PV <= 10 meq/kg), both release-critical."""
    draft = specification_create(
        users["manager"],
        product,
        effective_from="2020-01-01",
        lines=[
            {"method": "av", "codex_oil_type": "refined"},
            {"method": "pv", "codex_oil_type": "refined", "comparison": "rounding"},
        ],
    )
    return specification_approve(users["qa"], draft)


@pytest.fixture
def lot(users, product, specification):
    return lot_create(users["manager"], code="L-100", product=product, origin="production")


@pytest.fixture
def sample(users, lot):
    """A registered routine sample."""
    return sample_register(users["manager"], lot, label="L-100-A")


@pytest.fixture
def received_sample(users, sample):
    return sample_receive(users["manager"], sample, condition="sealed, clear", storage_place="fridge 2")


@pytest.fixture
def assigned_tests(users, received_sample):
    """The sample's tests, all assigned to "analyst"."""
    tests = list(Test.objects.filter(sample=received_sample).order_by("method_code"))
    return test_assign_bulk(users["manager"], tests, assignee=users["analyst"])


def entry_for(test: Test, inputs: dict) -> dict:
    """``result_record`` keywords for ``inputs`` on ``test``: through ``entry`` where the inputs
    were written with a typed titrant concentration, else with the test's ``TRACE`` lot."""
    if "titrant_concentration" in inputs:
        return entry(test.method_code, inputs)
    return {"inputs": inputs, **TRACE[test.method_code]}


def enter_duplicates(analyst, test: Test, first: dict, second: dict) -> Test:
    result_record(analyst, test, **entry_for(test, first))
    result_record(analyst, test, **entry_for(test, second))
    return Test.objects.get(pk=test.pk)


def enter_passing(analyst, tests) -> list[Test]:
    return [enter_duplicates(analyst, t, *INPUTS[t.method_code]) for t in tests]
