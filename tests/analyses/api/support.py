"""Helpers for the API tests."""
from __future__ import annotations

from dataclasses import dataclass, field
from functools import cached_property
from typing import Any

from rest_framework.test import APIClient

from analyses.models import (
    AuditEntry,
    Calibration,
    Certificate,
    Instrument,
    InstrumentCheck,
    Investigation,
    Lot,
    ReagentKind,
    ReagentLot,
    ResultInstrument,
    Standardisation,
    Product,
    Result,
    Sample,
    SampleState,
    Specification,
    SpecificationLine,
    Test,
)

from analyses.services.assignments import test_assign_bulk
from analyses.services.lots import lot_create, lot_release
from analyses.services.post_release import retain_tests_add
from analyses.services.review import test_accept
from analyses.services.samples import sample_receive, sample_register
from analyses.services.specifications import specification_approve, specification_create
from tests.analyses.lab_setup import AV_HIGH, AV_HIGH_TWIN, AV_LOW, AV_LOW_TWIN, PV_LOW, PV_LOW_TWIN, enter_duplicates
from tests.factories import SIGNING_PASSWORD, ProductFactory

WRITTEN_MODELS = (
    Product, Specification, SpecificationLine, Lot, Sample, Test, Result, Investigation, Certificate, AuditEntry,
    ReagentKind, ReagentLot, Standardisation, Instrument, Calibration, InstrumentCheck, ResultInstrument,
)


def row_counts() -> dict[str, int]:
    """Rows of every domain table; every change the services make also appends an audit
    entry, so equal counts mean nothing was written."""
    return {model.__name__: model.objects.count() for model in WRITTEN_MODELS}


class Lab:
    """Builds, on demand and through the services, the objects an API test starts from.

    ``users`` is the ``users`` fixture (one user per role). Everything is invented: an
    imaginary refinery's refined soybean oil with Codex default limits."""

    def __init__(self, users: dict):
        self.users = users
        self.manager = users["manager"]

    @cached_property
    def product(self) -> Product:
        return ProductFactory(code="RSO", name="Refined soybean oil", oil_type="soybean", created_by=self.manager)

    @cached_property
    def specification(self) -> Specification:
        """Approved: AV and PV from the Codex refined-oil defaults (CXS 210 appendix, found:
        AV <= 0.6 mg KOH/g, PV <= 10 meq O2/kg)."""
        draft = specification_create(
            self.manager, self.product, effective_from="2020-01-01",
            lines=[{"method": "av", "codex_oil_type": "refined"}, {"method": "pv", "codex_oil_type": "refined"}],
        )
        return specification_approve(self.users["qa"], draft)

    @cached_property
    def draft(self) -> Specification:
        return specification_create(
            self.manager, self.product, effective_from="2030-01-01", lines=[{"method": "av", "maximum": "0.5"}]
        )

    @cached_property
    def lot(self) -> Lot:
        self.specification
        return lot_create(self.manager, code="L-200", product=self.product, origin="production")

    def sample(self, label: str = "L-200-A") -> Sample:
        """The routine sample ``label``, registered when first asked for."""
        existing = Sample.objects.filter(label=label).first()
        return existing or sample_register(self.manager, self.lot, label=label)

    def received(self, label: str = "L-200-A") -> Sample:
        """The sample ``label``, received (its tests created) when first asked for."""
        sample = self.sample(label)
        if sample.state != SampleState.REGISTERED:
            return sample
        return sample_receive(self.manager, sample, condition="sealed", storage_place="fridge 1")

    def assigned(self, analyst: str = "analyst", label: str = "L-200-A") -> list[Test]:
        """The tests of a new received sample, ordered av, pv, assigned to ``analyst``."""
        tests = list(Test.objects.filter(sample=self.received(label)).order_by("method_code"))
        return test_assign_bulk(self.manager, tests, assignee=self.users[analyst])

    def entered(self, analyst: str = "analyst2", label: str = "L-200-A", av=(AV_LOW, AV_LOW_TWIN)) -> list[Test]:
        """Tests with both replicates entered by ``analyst`` (AV inputs ``av``, PV passing)."""
        av_test, pv_test = self.assigned(analyst, label)
        user = self.users[analyst]
        return [enter_duplicates(user, av_test, *av), enter_duplicates(user, pv_test, PV_LOW, PV_LOW_TWIN)]

    def accepted(self, av=(AV_LOW, AV_LOW_TWIN), label: str = "L-200-A") -> list[Test]:
        """Entered by analyst2, accepted by analyst."""
        return [test_accept(self.users["analyst"], test) for test in self.entered("analyst2", label, av)]

    def released(self) -> Lot:
        """The lot, its tests accepted and released by QA (certificate version 1 issued)."""
        self.accepted()
        lot_release(self.users["qa"], self.lot, password=SIGNING_PASSWORD)
        self.lot.refresh_from_db()
        return self.lot

    def retained(self) -> Sample:
        """A received retained sample of the lot, released (its routine tests accepted)."""
        retain = sample_receive(
            self.manager, sample_register(self.manager, self.lot, kind="retain", label="L-200-R"),
            condition="sealed", storage_place="retain store",
        )
        self.released()
        return retain

    def post_release_finding(self) -> Investigation:
        """An open post-release investigation: AV 0.69 mg KOH/g (> 0.6, Codex CXS 210, found) on the
        retained sample of the released lot, entered by analyst2 and accepted by analyst."""
        [test] = retain_tests_add(self.manager, self.retained(), methods=["av"], reason="customer complaint")
        test_assign_bulk(self.manager, [test], assignee=self.users["analyst2"])
        test_accept(self.users["analyst"], enter_duplicates(self.users["analyst2"], test, AV_HIGH, AV_HIGH_TWIN))
        return Investigation.objects.get(test=test)

    def investigation(self) -> Investigation:
        """An open OOS investigation: AV 0.69 mg KOH/g > 0.6 (Codex CXS 210 appendix, refined, found)."""
        av_test, _ = self.accepted(av=(AV_HIGH, AV_HIGH_TWIN))
        return Investigation.objects.get(test=av_test)


@dataclass(frozen=True)
class Call:
    """One request: a JSON ``body``, or ``raw`` text sent as application/json."""

    method: str
    path: str
    body: Any = None
    raw: str | None = None
    headers: dict[str, str] = field(default_factory=dict)

    def send(self, client: APIClient):
        extra = {f"HTTP_{name.upper().replace('-', '_')}": value for name, value in self.headers.items()}
        if self.raw is not None:
            return client.generic(self.method.upper(), self.path, self.raw, content_type="application/json", **extra)
        return getattr(client, self.method)(self.path, self.body, format="json", **extra)
