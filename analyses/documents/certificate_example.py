"""An invented certificate's content, in the stored JSON form, for the README's picture
(``manage.py certificate_picture``) without a database. Marrowvale Oils Ltd, its customer, the
lot and every result are made up; the limits are the Codex refined-oil defaults the method
plugins carry (CXS 210 appendix / CXS 19: AV max. 0.6 mg KOH/g, PV max. 10 meq/kg)."""
from __future__ import annotations

from typing import Any

from django.conf import settings

from analyses.services.certificates import DECISION_RULE


def _row(sample: str, method: str, title: str, standards: list[str], reported: str, unit: str, maximum: str) -> dict[str, Any]:
    return {
        "sample": sample, "sample_kind": "routine", "test": 0, "method": method, "method_title": title,
        "standards": standards, "method_versions": ["1"], "replicates": [reported, reported], "reported": reported,
        "unit": unit, "minimum": None, "maximum": maximum, "comparison": "absolute", "release_critical": True,
        "verdict": "pass", "duplicate_check": None, "accepted_by": "invented", "accepted_at": "2026-11-26T15:10:00Z",
    }


def example_certificate_content() -> dict[str, Any]:
    return {
        "certificate_number": f"{settings.CERTIFICATE_PREFIX}-2026-00042",
        "version": 1,
        "replaces": None,
        "reissue_reason": None,
        "laboratory": {"name": settings.LAB_NAME, "address": settings.LAB_ADDRESS},
        "customer": "Invented: Hollowmere Bakeries plc",
        "lot": {"code": "MV-RSO-2401", "origin": "production", "supplier": None, "container_ref": "Finished-oil tank FT-3",
                "quantity_kg": "48000.000", "produced_on": "2026-11-22"},
        "product": {"code": "RSO", "name": "Refined soybean oil", "oil_type": "soybean"},
        "specifications": [{"version": 1, "effective_from": "2026-01-01", "approved_by": "invented", "approved_at": "2025-12-15T09:00:00Z"}],
        "dates": {"sampling": {"first": "2026-11-24", "last": "2026-11-24"}, "receipt": {"first": "2026-11-24", "last": "2026-11-24"},
                  "testing": {"first": "2026-11-25", "last": "2026-11-26"}},
        "results": [
            _row("MV-RSO-2401-01", "av", "Acid value", ["AOCS Cd 3d-63", "ISO 660"], "0.12", "mg KOH/g", "0.6"),
            _row("MV-RSO-2401-01", "pv", "Peroxide value", ["AOCS Cd 8b-90", "ISO 3960"], "1.8", "meq O2/kg", "10.0"),
            _row("MV-RSO-2401-QC", "av", "Acid value", ["AOCS Cd 3d-63", "ISO 660"], "0.13", "mg KOH/g", "0.6"),
        ],
        "decision_rule": DECISION_RULE,
        "statement_of_conformity": "Conforms to specification v1: every release-critical result is within its limits.",
        "released_by": "invented.qa",
        "released_by_name": "Invented Reviewer (QA)",
        "released_at": "2026-11-27T08:45:00Z",
        "signature_meaning": "released for shipment against specification v1",
        "issued_by": "invented.qa",
        "issued_at": "2026-11-27T08:45:00Z",
    }
