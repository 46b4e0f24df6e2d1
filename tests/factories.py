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
    Comparison,
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
