import pytest

from analyses.models import Lot, Specification, SpecificationLine
from analyses.services.lots import lot_release
from analyses.services.review import test_accept
from tests.analyses.lab_setup import *  # noqa: F403  (shared fixtures)
from tests.analyses.lab_setup import enter_passing
from tests.factories import SIGNING_PASSWORD

# Words that live in the lab's own records and must never reach a customer's certificate.
INTERNAL_NOTE = "INTERNAL value from memory, not confirmed"
LIMITS_SOURCE = "LIMIT SOURCE Codex appendix (found)"


@pytest.fixture
def released_lot(users, assigned_tests) -> Lot:
    """L-100 for an invented customer, AV and PV accepted with review notes, released with a
    note; the specification carries an internal note and limit sources with evidence tags."""
    Specification.objects.filter(pk=assigned_tests[0].specification_line.specification_id).update(note=INTERNAL_NOTE)
    SpecificationLine.objects.filter(tests__in=assigned_tests).update(limits_source=LIMITS_SOURCE)
    for test in enter_passing(users["analyst"], assigned_tests):
        test_accept(users["analyst2"], test, note=INTERNAL_NOTE)
    lot = assigned_tests[0].sample.lot
    Lot.objects.filter(pk=lot.pk).update(customer="Invented Bakeries plc")
    lot_release(users["qa"], lot, password=SIGNING_PASSWORD, note=INTERNAL_NOTE)
    lot.refresh_from_db()
    return lot
