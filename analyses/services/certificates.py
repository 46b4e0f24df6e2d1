"""The certificate of analysis issued when a lot is released (stored, never changed), and its
reissue as a new version that names the one it replaces."""
from __future__ import annotations

import hashlib
import json
from typing import Any

from django.conf import settings
from django.db import transaction
from django.utils import timezone

from analyses.audit import audit_append, json_safe
from analyses.errors import Conflict, InvalidInput
from analyses.models import (
    AuditAction,
    AuditChainHead,
    Certificate,
    Lot,
    LotState,
    ResultStatus,
    Specification,
    TestState,
    Verdict,
)
from analyses.services.access import Actor, fetch, require_permission, required_text
from analyses.services.decision_statements import rule_statement
from analyses.services.release import release_samples
from analyses.services.signatures import release_meaning, signature_confirm
from analyses.services.uncertainty import mean_expanded_uncertainty
from plugins.contract import split_parameter
from plugins.registry import UnknownMethod, get_registry
from plugins.uncertainty import COVERAGE_FACTOR

DECISION_RULE = (
    "Each result is the mean of its replicates, reported by ASTM E29 rounding (half to even), with its expanded "
    "measurement uncertainty U (k = 2, GUM). Conformity is judged against each limit by the ASTM E29 method the "
    "specification line names: absolute (unrounded value) or rounding (value rounded to the limit's places); that "
    "value is then held against the limit moved inward by the guard band of the line's decision rule "
    "(none for simple acceptance). Each result states its rule and the risk it implies (ILAC G8:09/2019)."
)
CUSTOMER_MAX = 200


def _distinct(statements) -> list[dict[str, str]]:
    seen: list[dict[str, str]] = []
    for statement in statements:
        if statement not in seen:
            seen.append(statement)
    return seen


def _method_facts(code: str) -> dict[str, Any]:
    """The method's title and standards; for one component of a profile ("fac:C18:2") the title
    names the component, so each component is its own row of the certificate."""
    component = split_parameter(code)[1]
    try:
        plugin = get_registry().get(code)
    except UnknownMethod:
        return {"method_title": code, "standards": [], "component": component or None}
    title = plugin.title
    if component:
        title = f"{plugin.title}: {component} ({plugin.component_spec(component).title})"
    return {"method_title": title, "standards": list(plugin.standards), "component": component or None}


def measured_with(result) -> dict[str, Any]:
    """What a replicate was measured with (issue 9): the titrant lot and its standardisation,
    and each instrument with the calibration and check that made it usable."""
    return {
        "replicate": result.replicate,
        "titrant_lot": result.reagent_lot.code if result.reagent_lot_id else None,
        "standardisation": result.standardisation_id,
        "titrant_concentration": result.titrant_concentration or None,
        "titrant_uncertainty": result.titrant_uncertainty or None,
        "instruments": [
            {"asset_id": use.instrument.asset_id, "kind": use.instrument.kind, "calibration": use.calibration_id, "check": use.routine_check_id}
            for use in result.instrument_uses.all()
        ],
    }


def _span(moments) -> dict[str, Any] | None:
    """The first and last date among ``moments`` (datetimes or None), or None when there is none."""
    days = sorted(timezone.localdate(m) for m in moments if m is not None)
    return {"first": days[0], "last": days[-1]} if days else None


def lot_specification_versions(lot: Lot) -> list[int]:
    """The versions of the specifications the lot's release samples were tested against."""
    ids = {test.specification_line.specification_id for sample in release_samples(lot) for test in sample.live_tests}
    return sorted(Specification.objects.filter(pk__in=ids).values_list("version", flat=True))


def _conformity(results: list[dict[str, Any]], versions: list[int]) -> str:
    against = ", ".join(f"v{v}" for v in versions) or "-"
    failed = [row["method_title"] for row in results if row["verdict"] != Verdict.PASS]
    critical_failed = [row["method_title"] for row in results if row["verdict"] != Verdict.PASS and row["release_critical"]]
    if critical_failed:  # not reachable through a release; kept so the statement never overstates
        return f"Does not conform to specification {against}: {', '.join(critical_failed)} outside the limits."
    statement = f"Conforms to specification {against}: every release-critical result is within its limits."
    if failed:
        statement += f" Outside the limits but not release-critical: {', '.join(failed)}."
    return statement


def certificate_content(
    actor: Actor,
    lot: Lot,
    issued_at,
    *,
    number: str,
    version: int = 1,
    replaces: Certificate | None = None,
    reissue_reason: str = "",
) -> dict[str, Any]:
    """What the certificate states, as JSON: built from the lot as it stands. The release's
    signature (who, when, its meaning) is the lot's decision, whoever issues the version."""
    results = []
    specification_ids: set[int] = set()
    taken, received, tested = [], [], []
    for sample in release_samples(lot):
        taken.append(sample.taken_at)
        received.append(sample.received_at)
        for test in sample.live_tests:
            if test.state != TestState.ACCEPTED:
                continue
            line = test.specification_line
            specification_ids.add(line.specification_id)
            replicates = list(
                test.results.filter(status=ResultStatus.CURRENT)
                .select_related("reagent_lot", "standardisation")
                .prefetch_related("instrument_uses__instrument")
                .order_by("replicate")
            )
            tested.extend(r.entered_at for r in replicates)
            results.append(
                {
                    "sample": sample.label,
                    "sample_kind": sample.kind,
                    "test": test.pk,
                    "method": test.method_code,
                    **_method_facts(test.method_code),
                    "method_versions": sorted({r.method_version for r in replicates}),
                    "replicates": [r.reported for r in replicates],
                    "measured_with": [measured_with(r) for r in replicates],
                    "reported": test.reported,
                    "unit": test.unit,
                    "minimum": line.minimum or None,
                    "maximum": line.maximum or None,
                    "comparison": line.comparison,
                    "release_critical": line.release_critical,
                    "verdict": test.verdict,
                    "expanded_uncertainty": mean_expanded_uncertainty(test),
                    "coverage_factor": COVERAGE_FACTOR,
                    "decision_rule": rule_statement(line),
                    "duplicate_check": test.duplicate_check,
                    "accepted_by": test.reviewed_by.username if test.reviewed_by_id else None,
                    "accepted_at": test.reviewed_at,
                }
            )
    specifications = Specification.objects.filter(pk__in=specification_ids).select_related("approved_by").order_by("version")
    versions = [s.version for s in specifications]
    released_by = lot.decided_by or actor
    return json_safe(
        {
            "certificate_number": number,
            "version": version,
            "replaces": replaces.number if replaces else None,
            "reissue_reason": reissue_reason or None,
            "laboratory": {"name": settings.LAB_NAME, "address": settings.LAB_ADDRESS},
            "customer": lot.customer or None,
            "lot": {
                "code": lot.code,
                "origin": lot.origin,
                "supplier": lot.supplier or None,
                "container_ref": lot.container_ref or None,
                "quantity_kg": lot.quantity_kg,
                "produced_on": lot.produced_on,
            },
            "product": {"code": lot.product.code, "name": lot.product.name, "oil_type": lot.product.oil_type},
            "specifications": [
                {
                    "version": s.version,
                    "effective_from": s.effective_from,
                    "approved_by": s.approved_by.username if s.approved_by_id else None,
                    "approved_at": s.approved_at,
                }
                for s in specifications
            ],
            "dates": {"sampling": _span(taken), "receipt": _span(received), "testing": _span(tested)},
            "results": results,
            "decision_rule": DECISION_RULE,
            "decision_rules": _distinct(result["decision_rule"] for result in results),
            "statement_of_conformity": _conformity(results, versions),
            "released_by": released_by.username,
            "released_by_name": released_by.get_full_name() or released_by.username,
            "released_at": lot.decided_at or issued_at,
            "signature_meaning": release_meaning(versions),
            "issued_by": getattr(actor, "username", None),
            "issued_at": issued_at,
        }
    )


def _next_number(issued_at) -> str:
    """<prefix>-<year>-<sequence>, the sequence counting the year's certificates from 1.

    Every certificate is issued in a transaction that appends to the audit trail, which locks
    the chain's head row; taking that lock first makes the count and the insert one step, so
    two releases at once cannot draw the same number."""
    AuditChainHead.objects.select_for_update().get_or_create(id=1)
    stem = f"{settings.CERTIFICATE_PREFIX}-{timezone.localdate(issued_at).year}-"
    sequence = Certificate.objects.filter(number__startswith=stem).count() + 1
    while Certificate.objects.filter(number=f"{stem}{sequence:05d}").exists():  # a number taken by hand
        sequence += 1
    return f"{stem}{sequence:05d}"


def _store(actor: Actor, lot: Lot, content: dict[str, Any], *, issued_at, replaces: Certificate | None, reason: str) -> Certificate:
    digest = hashlib.sha256(json.dumps(content, sort_keys=True, separators=(",", ":")).encode()).hexdigest()
    certificate = Certificate.objects.create(
        lot=lot,
        number=content["certificate_number"],
        version=content["version"],
        replaces=replaces,
        reissue_reason=reason,
        content=content,
        content_sha256=digest,
        issued_by=actor,
        issued_at=issued_at,
    )
    changes = {"number": [None, certificate.number], "version": [None, certificate.version], "content_sha256": [None, digest]}
    if replaces is not None:
        changes["replaces"] = [None, replaces.number]
    audit_append(actor, AuditAction.CREATE, certificate, changes, reason=reason, lot_ref=lot.pk)
    return certificate


def certificate_issue(actor: Actor, lot: Lot) -> Certificate:
    """Build, store and record the first certificate of a lot being released (inside the release)."""
    issued_at = timezone.now()
    content = certificate_content(actor, lot, issued_at, number=_next_number(issued_at))
    return _store(actor, lot, content, issued_at=issued_at, replaces=None, reason="")


def _current_version(lot: Lot) -> Certificate:
    if lot.state != LotState.RELEASED:
        raise Conflict(f"lot {lot.code} is {lot.state}; only a released lot's certificate can be reissued")
    current = lot.certificates.order_by("-version").first()
    if current is None:
        raise Conflict(f"lot {lot.code} has no certificate to reissue")
    return current


def certificate_reissue(
    actor: Actor,
    lot: Lot | int,
    *,
    reason: str,
    password: object,
    customer: str | None = None,
    request=None,
) -> Certificate:
    """A new version of a released lot's certificate, with its own number, marked as replacing
    the current one, which stays retrievable. ``customer`` corrects the customer's name on the
    lot first (audited); otherwise the new version is rebuilt from the record as it stands (a
    result corrected since the release). Needs ``release_lot`` and the user's password."""
    require_permission(actor, "release_lot", "reissue certificates")
    reason = required_text(reason, "reason")
    if customer is not None:
        customer = required_text(customer, "customer")
        if len(customer) > CUSTOMER_MAX:
            raise InvalidInput.for_field("customer", f"must be at most {CUSTOMER_MAX} characters")
    _current_version(fetch(Lot, lot))  # a Conflict is said before the password is asked for
    # outside the transaction: a lock-out that a wrong password trips is recorded, not rolled back
    signature_confirm(actor, password, request=request)
    with transaction.atomic():
        lot = fetch(Lot, lot, lock=True)
        _current_version(lot)
        if customer is not None and customer != lot.customer:
            old = lot.customer
            lot.customer = customer
            lot.save(update_fields=["customer"])
            audit_append(actor, AuditAction.CHANGE, lot, {"customer": [old or None, customer]}, reason=reason, lot_ref=lot.pk)
        return certificate_reissue_locked(actor, lot, reason=reason)


def certificate_reissue_locked(actor: Actor, lot: Lot, *, reason: str) -> Certificate:
    """The new version itself, for a caller that checked who may sign and holds the lot's lock
    in its transaction (``certificate_reissue``; a result corrected after release)."""
    current = _current_version(lot)
    issued_at = timezone.now()
    content = certificate_content(
        actor, lot, issued_at, number=_next_number(issued_at), version=current.version + 1,
        replaces=current, reissue_reason=reason,
    )
    return _store(actor, lot, content, issued_at=issued_at, replaces=current, reason=reason)
