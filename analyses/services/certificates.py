"""The certificate of analysis issued when a lot is released (stored, never changed)."""
from __future__ import annotations

import hashlib
import json
from typing import Any

from django.utils import timezone

from analyses.audit import audit_append, json_safe
from analyses.models import AuditAction, Certificate, Lot, ResultStatus, Specification, TestState
from analyses.services.access import Actor
from analyses.services.decision_statements import rule_statement
from analyses.services.release import release_samples
from analyses.services.uncertainty import mean_expanded_uncertainty
from plugins.registry import UnknownMethod, get_registry
from plugins.uncertainty import COVERAGE_FACTOR

DECISION_RULE = (
    "Each result is the mean of its replicates, reported by ASTM E29 rounding (half to even), with its expanded "
    "measurement uncertainty U (k = 2, GUM). Conformity is judged against each limit by the ASTM E29 method the "
    "specification line names: absolute (unrounded value) or rounding (value rounded to the limit's places); that "
    "value is then held against the limit moved inward by the guard band of the line's decision rule "
    "(none for simple acceptance). Each result states its rule and the risk it implies (ILAC G8:09/2019)."
)


def _distinct(statements) -> list[dict[str, str]]:
    seen: list[dict[str, str]] = []
    for statement in statements:
        if statement not in seen:
            seen.append(statement)
    return seen


def _method_facts(code: str) -> dict[str, Any]:
    try:
        plugin = get_registry().get(code)
    except UnknownMethod:
        return {"method_title": code, "standards": []}
    return {"method_title": plugin.title, "standards": list(plugin.standards)}


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


def certificate_content(actor: Actor, lot: Lot, issued_at) -> dict[str, Any]:
    results = []
    specification_ids: set[int] = set()
    for sample in release_samples(lot):
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
    return json_safe(
        {
            "certificate_number": f"COA-{lot.code}",
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
            "results": results,
            "decision_rule": DECISION_RULE,
            "decision_rules": _distinct(result["decision_rule"] for result in results),
            "released_by": actor.username,
            "released_at": issued_at,
        }
    )


def certificate_issue(actor: Actor, lot: Lot) -> Certificate:
    """Build, store and record the certificate of a lot being released."""
    issued_at = timezone.now()
    content = certificate_content(actor, lot, issued_at)
    digest = hashlib.sha256(json.dumps(content, sort_keys=True, separators=(",", ":")).encode()).hexdigest()
    certificate = Certificate.objects.create(
        lot=lot,
        number=content["certificate_number"],
        content=content,
        content_sha256=digest,
        issued_by=actor,
        issued_at=issued_at,
    )
    audit_append(
        actor, AuditAction.CREATE, certificate,
        {"number": [None, certificate.number], "content_sha256": [None, digest]}, lot_ref=lot.pk,
    )
    return certificate
