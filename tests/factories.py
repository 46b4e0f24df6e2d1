"""factory_boy factories for the analyses domain.

They write rows directly, for setting up a starting point; tests move objects through
their states with the services, so the rules and the audit trail are exercised.
"""
from __future__ import annotations

import datetime as dt

import factory
from django.contrib.auth import get_user_model
from django.contrib.auth.hashers import make_password
from django.utils import timezone

from analyses.models import (
    Calibration,
    CheckKind,
    Comparison,
    Instrument,
    InstrumentCheck,
    InstrumentKind,
    ReagentKind,
    ReagentLot,
    Standardisation,
    TitrantSubstance,
    Lot,
    LotOrigin,
    Priority,
    Product,
    Sample,
    SampleKind,
    Specification,
    SpecificationLine,
    SpecificationStatus,
    Test,
)
from analyses.roles import roles_ensure


# The password test users re-enter to sign a release, rejection or reissue (invented).
SIGNING_PASSWORD = "invented-signing-pass"


class UserFactory(factory.django.DjangoModelFactory):
    """A user; ``roles=["analyst"]`` puts them in those role groups."""

    class Meta:
        model = get_user_model()
        django_get_or_create = ("username",)
        skip_postgeneration_save = True

    username = factory.Sequence(lambda n: f"user{n}")
    email = factory.LazyAttribute(lambda u: f"{u.username}@example.invalid")
    # every test user signs QA decisions with this one (tests/conftest.py makes hashing it quick)
    password = factory.LazyFunction(lambda: make_password(SIGNING_PASSWORD))

    @factory.post_generation
    def roles(self, create, extracted, **kwargs):
        if not create or not extracted:
            return
        groups = roles_ensure()
        self.groups.add(*(groups[name] for name in extracted))


class ProductFactory(factory.django.DjangoModelFactory):
    class Meta:
        model = Product

    code = factory.Sequence(lambda n: f"P{n:03d}")
    name = factory.LazyAttribute(lambda p: f"Test oil {p.code}")
    oil_type = "soybean"
    created_by = factory.SubFactory(UserFactory)
    created_at = factory.LazyFunction(timezone.now)


class SpecificationFactory(factory.django.DjangoModelFactory):
    """A draft specification; ``approved=True`` approves it after its lines are added."""

    class Meta:
        model = Specification
        skip_postgeneration_save = True

    product = factory.SubFactory(ProductFactory)
    version = factory.Sequence(lambda n: n + 1)
    effective_from = factory.LazyFunction(lambda: timezone.localdate() - dt.timedelta(days=30))
    created_by = factory.SubFactory(UserFactory)
    created_at = factory.LazyFunction(timezone.now)

    @factory.post_generation
    def approved(self, create, extracted, **kwargs):
        if create and extracted:
            self.status = SpecificationStatus.APPROVED
            self.approved_by = self.created_by
            self.approved_at = timezone.now()
            self.save()


class SpecificationLineFactory(factory.django.DjangoModelFactory):
    class Meta:
        model = SpecificationLine

    specification = factory.SubFactory(SpecificationFactory)
    position = factory.Sequence(lambda n: n)
    method_code = "av"
    unit = "mg KOH/g"
    minimum = ""
    maximum = "0.6"
    comparison = Comparison.ABSOLUTE
    release_critical = True
    turnaround_days = 3


class LotFactory(factory.django.DjangoModelFactory):
    class Meta:
        model = Lot

    code = factory.Sequence(lambda n: f"LOT-{n:04d}")
    product = factory.SubFactory(ProductFactory)
    origin = LotOrigin.PRODUCTION
    created_by = factory.SubFactory(UserFactory)
    created_at = factory.LazyFunction(timezone.now)


class SampleFactory(factory.django.DjangoModelFactory):
    """A registered sample."""

    class Meta:
        model = Sample

    lot = factory.SubFactory(LotFactory)
    label = factory.Sequence(lambda n: f"S-{n:05d}")
    kind = SampleKind.ROUTINE
    registered_by = factory.SubFactory(UserFactory)
    registered_at = factory.LazyFunction(timezone.now)


class TestFactory(factory.django.DjangoModelFactory):
    """A pending test on a sample (for selector tests that need many rows quickly)."""

    __test__ = False

    class Meta:
        model = Test

    sample = factory.SubFactory(SampleFactory)
    specification_line = factory.SubFactory(SpecificationLineFactory)
    method_code = factory.LazyAttribute(lambda t: t.specification_line.method_code)
    replicates = 2
    priority = Priority.NORMAL
    due_on = factory.LazyFunction(lambda: timezone.localdate() + dt.timedelta(days=3))
    created_at = factory.LazyFunction(timezone.now)


# --- traceable measurements (issue 9) --------------------------------------------------
# Rows written directly, as above: a usable titrant lot has a current standardisation within
# its validity; a usable instrument a passed calibration not yet due and, for a balance, a
# passed check today.


class ReagentKindFactory(factory.django.DjangoModelFactory):
    class Meta:
        model = ReagentKind
        django_get_or_create = ("name",)

    name = "KOH 0.1 mol/L"
    substance = TitrantSubstance.KOH
    solvent = "ethanol"
    nominal_concentration = "0.1"
    nominal_as_written = "0.1 mol/L"
    equivalents_per_mole = 1
    validity_days = 7
    created_by = factory.SubFactory(UserFactory)
    created_at = factory.LazyFunction(timezone.now)


class ReagentLotFactory(factory.django.DjangoModelFactory):
    class Meta:
        model = ReagentLot
        django_get_or_create = ("code",)

    kind = factory.SubFactory(ReagentKindFactory)
    code = factory.Sequence(lambda n: f"RL-{n:04d}")
    prepared_on = factory.LazyFunction(lambda: timezone.localdate() - dt.timedelta(days=10))
    expires_on = factory.LazyFunction(lambda: timezone.localdate() + dt.timedelta(days=80))
    prepared_by = "bench chemist"
    created_by = factory.SubFactory(UserFactory)
    created_at = factory.LazyFunction(timezone.now)


class StandardisationFactory(factory.django.DjangoModelFactory):
    """A current standardisation giving exactly ``concentration`` (no computation: for a
    starting point; tests of the computation go through standardisation_record)."""

    class Meta:
        model = Standardisation

    lot = factory.SubFactory(ReagentLotFactory)
    primary_standard = "khp"
    replicates = factory.LazyFunction(list)
    concentrations = factory.LazyAttribute(lambda s: [s.concentration, s.concentration])
    concentration = "0.1"
    uncertainty = "0.0001"
    relative_spread = "0"
    spread_limit = "0.002"
    performed_by = factory.SubFactory(UserFactory)
    performed_at = factory.LazyFunction(lambda: timezone.now() - dt.timedelta(hours=1))
    valid_until = factory.LazyAttribute(lambda s: s.performed_at + dt.timedelta(days=7))


class InstrumentFactory(factory.django.DjangoModelFactory):
    class Meta:
        model = Instrument
        django_get_or_create = ("asset_id",)

    asset_id = factory.Sequence(lambda n: f"INS-{n:04d}")
    kind = InstrumentKind.BALANCE
    location = "bench 1"
    check_every_days = factory.LazyAttribute(lambda i: 1 if i.kind == InstrumentKind.BALANCE else None)
    created_by = factory.SubFactory(UserFactory)
    created_at = factory.LazyFunction(timezone.now)


class CalibrationFactory(factory.django.DjangoModelFactory):
    class Meta:
        model = Calibration

    instrument = factory.SubFactory(InstrumentFactory)
    calibrated_on = factory.LazyFunction(lambda: timezone.localdate() - dt.timedelta(days=30))
    due_on = factory.LazyFunction(lambda: timezone.localdate() + dt.timedelta(days=335))
    certificate_ref = factory.Sequence(lambda n: f"CAL-{n:05d}")
    passed = True
    standard_uncertainty = "0.00009"
    unit = "g"
    recorded_by = factory.SubFactory(UserFactory)
    recorded_at = factory.LazyFunction(timezone.now)


class InstrumentCheckFactory(factory.django.DjangoModelFactory):
    class Meta:
        model = InstrumentCheck

    instrument = factory.SubFactory(InstrumentFactory)
    kind = CheckKind.CHECK_WEIGHT
    reference = "check weight 100 g"
    nominal = "100.0000"
    measured = "100.0001"
    tolerance = "0.0005"
    unit = "g"
    passed = True
    performed_by = factory.SubFactory(UserFactory)
    performed_at = factory.LazyFunction(lambda: timezone.now() - dt.timedelta(hours=1))


def usable_instrument(asset_id: str, kind: str = InstrumentKind.BALANCE, *, by=None, **calibration) -> Instrument:
    """An instrument with a passed calibration (and, when it needs one, a passed check);
    ``by`` records them all (default: new users)."""
    who = {} if by is None else {"created_by": by}
    instrument = InstrumentFactory(asset_id=asset_id, kind=kind, **who)
    if not instrument.calibrations.exists():
        defaults = {"standard_uncertainty": "0.00009", "unit": "g"} if kind == InstrumentKind.BALANCE else {
            "standard_uncertainty": "", "tolerance": "0.03", "unit": "mL"
        }
        CalibrationFactory(instrument=instrument, **{**defaults, **calibration}, **({} if by is None else {"recorded_by": by}))
    if instrument.check_every_days and not instrument.checks.exists():
        InstrumentCheckFactory(instrument=instrument, **({} if by is None else {"performed_by": by}))
    return instrument


def usable_titrant_lot(code: str, *, kind: ReagentKind | None = None, concentration: str = "0.1", by=None, **lot) -> ReagentLot:
    """A titrant lot in date with a current standardisation giving ``concentration``;
    ``by`` records them (default: new users)."""
    who = {} if by is None else {"created_by": by}
    titrant = ReagentLotFactory(code=code, kind=kind or ReagentKindFactory(**who), **who, **lot)
    if not titrant.standardisations.exists():
        StandardisationFactory(lot=titrant, concentration=concentration, **({} if by is None else {"performed_by": by}))
    return titrant
