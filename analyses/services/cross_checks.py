"""Cross-checks between methods on one sample: two results that chemistry ties together.

When a sample has complete results for both methods of an entry in ``CROSS_CHECKS``, the entry
compares them; a disagreement beyond its tolerance becomes a review warning on both tests, each
naming the other result. Like every review warning it is for the reviewer to weigh and never blocks
release (``release_warnings`` shows it on the lot's readiness).

The warnings of a test are its own (scope, blank, decision: ``review_warnings.test_review_warnings``)
followed by its cross-check warnings, each starting with ``CROSS_CHECK_PREFIX``. Whenever a test's
aggregate is set or cleared (``results.set_test_aggregate``), or a test is invalidated, the
cross-check warnings of the test and of its partners on the sample are worked out again, so a
corrected or sent-back result takes its warning away from the other test too.

An entry is a :class:`CrossCheck`: the two method codes and a ``compare`` function that receives the
two tests (first the one of ``methods[0]``) and returns a :class:`Disagreement` or None. The
fatty-acid composition's calculated IV and SV are compared with the titrated ones when the sample
has tests on ``fac:iv_calc`` or ``fac:sv_calc``.
"""
from __future__ import annotations

from collections.abc import Callable, Iterable
from dataclasses import dataclass
from decimal import Decimal, localcontext

from django.conf import settings

from analyses.audit import audit_append
from analyses.models import AuditAction, Test, TestState
from analyses.selectors.tests import tests_of_samples_locked
from analyses.services.access import Actor
from plugins.contract import exact_context

CROSS_CHECK_PREFIX = "cross-check: "
# tests whose results no longer stand are nobody's partner
_NOT_STANDING = (TestState.INVALIDATED, TestState.CANCELLED)


@dataclass(frozen=True)
class Disagreement:
    """What a reviewer reads: the comparison made, and why it is beyond the tolerance."""

    detail: str


@dataclass(frozen=True)
class CrossCheck:
    name: str
    methods: tuple[str, str]
    compare: Callable[[Test, Test], Disagreement | None]


def _exact(test: Test) -> Decimal:
    return Decimal(test.value_exact)


def _label(test: Test) -> str:
    return f"{test.method_code.upper()} {test.reported} {test.unit} (test {test.pk})"


# --- AV against FFA x the basis factor (AOCS Ca 5a-40) -------------------------------------------
# Molar masses from IUPAC atomic weights (C 12.011, H 1.008, O 15.999, K 39.098; shared/references.md,
# computed); tests/analyses/services/test_cross_checks.py checks them against molmass.
KOH_MOLAR_MASS = Decimal("56.106")
FATTY_ACID_MOLAR_MASS = {"oleic": Decimal("282.47"), "palmitic": Decimal("256.43"), "lauric": Decimal("200.32")}


def av_per_ffa(basis: str) -> Decimal:
    """mg KOH/g per % of free fatty acids on ``basis``: M(KOH) x 10 / M(acid). As oleic it is 1.986,
    the 1.99 of AOCS Ca 5a-40 (found)."""
    with localcontext(exact_context()):
        return KOH_MOLAR_MASS * 10 / FATTY_ACID_MOLAR_MASS[basis]


def _ffa_basis(ffa: Test) -> str:
    basis = ffa.specification_line.basis or ffa.unit.removeprefix("% as ").strip()
    return basis if basis in FATTY_ACID_MOLAR_MASS else "oleic"


def av_ffa_tolerance(expected: Decimal, measured: Decimal) -> tuple[Decimal, str]:
    """The largest difference that is no disagreement, and where it comes from."""
    relative = Decimal(str(settings.CROSS_CHECK_AV_FFA_RELATIVE))
    absolute = Decimal(str(settings.CROSS_CHECK_AV_FFA_ABSOLUTE))
    with localcontext(exact_context()):
        by_size = relative * max(abs(expected), abs(measured))
    tolerance = max(by_size, absolute)
    words = (
        f"{(relative * 100).normalize():f} % of the larger, at least {absolute.normalize():f} mg KOH/g "
        "(a setting; common practice, no source)"
    )
    return tolerance, words


def compare_av_ffa(av: Test, ffa: Test) -> Disagreement | None:
    basis = _ffa_basis(ffa)
    factor = av_per_ffa(basis)
    measured = _exact(av)
    with localcontext(exact_context()):
        expected = factor * _exact(ffa)
        difference = abs(measured - expected)
    tolerance, words = av_ffa_tolerance(expected, measured)
    if difference <= tolerance:
        return None
    return Disagreement(
        f"AV {av.reported} mg KOH/g against FFA {ffa.reported} % as {basis} x {factor:.3f} "
        f"(M(KOH) x 10 / M({basis} acid); AOCS Ca 5a-40: AV = 1.99 x FFA as oleic) = "
        f"{expected:.2f} mg KOH/g: they differ by {difference:.2f} mg KOH/g, more than the tolerance of "
        f"{tolerance:.2f} mg KOH/g ({words}); check the titrant strengths, the masses and the basis"
    )


# --- titrated IV and SV against the ones calculated from the fatty-acid composition ---------------
# ISO 3961 Annex B computes the IV from the composition (AOCS Cd 1c-85) and warns that crude,
# cold-pressed and (partially) hydrogenated oils can differ between the two methods (found,
# shared/references.md). The comparison needs the calculated value as a test of its own: a
# specification line on ``fac:iv_calc`` or ``fac:sv_calc``.
ANNEX_B_PRODUCT_WORDS = ("crude", "cold-pressed", "cold pressed", "virgin", "hydrogenated")


def _annex_b_note(test: Test) -> str:
    product = test.sample.lot.product
    described = " ".join((product.name, product.oil_type, product.description)).lower()
    found = [word for word in ANNEX_B_PRODUCT_WORDS if word in described]
    if not found:
        return ""
    return (f"; the product is {found[0]}: ISO 3961 Annex B warns that crude, cold-pressed and hydrogenated oils "
            "can differ between the titrated and the calculated iodine value, so the difference may be the oil's, "
            "not the analysis'")


def _titrated_against_calculated(what: str, unit: str, setting: str, *, annex_b: bool) -> Callable[[Test, Test], Disagreement | None]:
    def compare(titrated: Test, calculated: Test) -> Disagreement | None:
        tolerance = Decimal(str(getattr(settings, setting)))
        with localcontext(exact_context()):
            difference = abs(_exact(titrated) - _exact(calculated))
        if difference <= tolerance:
            return None
        note = _annex_b_note(titrated) if annex_b else ""
        return Disagreement(
            f"{what} {titrated.reported} {unit} titrated against {calculated.reported} {unit} calculated from the "
            f"fatty-acid composition: they differ by {difference:.1f} {unit}, more than the tolerance of "
            f"{tolerance.normalize():f} {unit} ({setting}, a setting; common practice, no source){note}"
        )

    return compare


CROSS_CHECKS: tuple[CrossCheck, ...] = (
    CrossCheck("AV against FFA", ("av", "ffa"), compare_av_ffa),
    CrossCheck("IV against the composition", ("iv", "fac:iv_calc"),
               _titrated_against_calculated("IV", "g I2/100 g", "CROSS_CHECK_IV_ABSOLUTE", annex_b=True)),
    CrossCheck("SV against the composition", ("sv", "fac:sv_calc"),
               _titrated_against_calculated("SV", "mg KOH/g", "CROSS_CHECK_SV_ABSOLUTE", annex_b=False)),
)


# --- applying the checks -----------------------------------------------------------------------------

def _standing(test: Test) -> bool:
    return bool(test.value_exact) and test.state not in _NOT_STANDING


def _warnings_between(test: Test, others: Iterable[Test]) -> list[str]:
    """The cross-check warnings of ``test`` against each standing test in ``others``."""
    found = []
    if not _standing(test):
        return found
    for other in others:
        if other.pk == test.pk or not _standing(other):
            continue
        for check in CROSS_CHECKS:
            if (test.method_code, other.method_code) == check.methods:
                disagreement = check.compare(test, other)
            elif (other.method_code, test.method_code) == check.methods:
                disagreement = check.compare(other, test)
            else:
                continue
            if disagreement is not None:
                found.append(f"{CROSS_CHECK_PREFIX}{check.name}: disagrees with {_label(other)}: {disagreement.detail}")
    return found


def own_warnings(warnings: Iterable[str]) -> list[str]:
    """A test's warnings without its cross-check ones."""
    return [w for w in warnings or () if not w.startswith(CROSS_CHECK_PREFIX)]


def _partner_codes(method_code: str) -> set[str]:
    return {code for check in CROSS_CHECKS if method_code in check.methods for code in check.methods if code != method_code}


def cross_check_partners(tests: Iterable[Test]) -> dict[int, list[Test]]:
    """Each test's partners on its sample (tests of the methods a check ties to its own), read
    and locked in one query for all of them; a partner that is itself among ``tests`` is that
    object, so a batch that completes both sees both as they now stand."""
    tests = list(tests)
    codes = {code for test in tests for code in _partner_codes(test.method_code)}
    if not codes:
        return {test.pk: [] for test in tests}
    given = {test.pk: test for test in tests}
    rows = [given.get(row.pk, row) for row in tests_of_samples_locked({test.sample_id for test in tests}, codes)]
    return {
        test.pk: [row for row in rows if row.sample_id == test.sample_id and row.pk != test.pk
                  and row.method_code in _partner_codes(test.method_code)]
        for test in tests
    }


def _partners(test: Test) -> list[Test]:
    return cross_check_partners([test])[test.pk]


def cross_check_warnings(test: Test, partners: list[Test] | None = None) -> list[str]:
    """``test``'s cross-check warnings against its partners on the sample, as they stand now;
    ``test`` is taken as given (its new aggregate need not be saved yet). ``partners`` when the
    caller has read them (``cross_check_partners``)."""
    return _warnings_between(test, _partners(test) if partners is None else partners)


def cross_checks_refresh_partners(actor: Actor, test: Test, *, reason: str, partners: list[Test] | None = None) -> None:
    """Work out again the cross-check warnings of ``test``'s partners on the sample, against
    ``test`` as given, and store those that changed, each audited. Run inside the caller's
    transaction, with the sample locked (``results.lock_test_row``)."""
    partners = _partners(test) if partners is None else partners
    for partner in partners:
        others = [test, *(p for p in partners if p.pk != partner.pk)]
        before = list(partner.review_warnings or [])
        after = own_warnings(before) + _warnings_between(partner, others)
        if after == before:
            continue
        partner.review_warnings = after
        partner.save(update_fields=["review_warnings"])
        audit_append(
            actor, AuditAction.CHANGE, partner, {"review_warnings": [before, after]},
            reason=f"cross-check with test {test.pk}: {reason}", lot_ref=test.sample.lot_id, sample_ref=test.sample_id,
        )
