"""How the certificate words limits, verdicts, dates and reissues (no database)."""
from __future__ import annotations

from analyses.documents.certificate_layout import certificate_layout, limits_text, verdict_text

CONTENT = {  # invented
    "certificate_number": "MVO-2026-00007", "version": 2, "replaces": "MVO-2026-00003",
    "reissue_reason": "customer name corrected",
    "laboratory": {"name": "Invented Lab", "address": "1 Invented Road"}, "customer": None,
    "lot": {"code": "L-1", "origin": "delivery", "supplier": "Invented Supplier", "container_ref": None,
            "quantity_kg": "21500.500", "produced_on": "2026-03-01"},
    "product": {"code": "RSO", "name": "Refined soybean oil", "oil_type": "soybean"},
    "specifications": [{"version": 3, "effective_from": "2026-01-01"}],
    "dates": {"sampling": None, "receipt": {"first": "2026-03-02", "last": "2026-03-02"},
              "testing": {"first": "2026-03-02", "last": "2026-03-04"}},
    "results": [{"sample": "L-1-A", "method": "iv", "method_title": "Iodine value", "standards": ["ISO 3961"],
                 "reported": "131", "unit": "g I2/100 g", "minimum": "124", "maximum": "139", "verdict": "pass"}],
    "decision_rule": "Simple acceptance.", "statement_of_conformity": "Conforms to specification v3.",
    "released_by": "qa", "released_by_name": "Invented Person", "released_at": "2026-03-05T09:30:00+00:00",
    "signature_meaning": "released for shipment against specification v3", "issued_by": "qa2",
    "issued_at": "2026-03-09T14:00:00+00:00",
}


def test_limits_and_verdicts_in_words():
    assert limits_text("124", "139", "g I2/100 g") == "124 to 139"
    assert limits_text(None, "0.6", "mg KOH/g") == "max. 0.6"
    assert limits_text("189", None, "mg KOH/g") == "min. 189"
    assert limits_text(None, None, "%") == "no limit (reported only)"
    assert verdict_text("pass") == "Conforms" and verdict_text("oos") == "Does not conform"
    assert verdict_text("conditional_pass") == "Conditional pass"  # a verdict this layout does not know yet


def test_a_reissue_names_what_it_replaces_and_who_issued_it():
    layout = certificate_layout(CONTENT)
    assert layout.notices == ["Replaces certificate MVO-2026-00003, which is withdrawn. Reason for reissue: customer name corrected"]
    assert layout.issue_line == "Certificate MVO-2026-00007, version 2, issued 2026-03-09 14:00 UTC"
    facts = dict(layout.facts)
    assert "Customer" not in facts and "Sampled" in facts  # no customer: no line; no sampling date: said so
    assert facts["Sampled"] == "not recorded" and facts["Received"] == "2026-03-02"
    assert facts["Tested"] == "2026-03-02 to 2026-03-04" and facts["Quantity"] == "21,500.5 kg"
    assert dict(layout.signature) == {
        "Released by": "Invented Person", "Released at": "2026-03-05 09:30 UTC",
        "Meaning of the signature": "released for shipment against specification v3", "This version issued by": "qa2",
    }
    assert not layout.show_uncertainty


def test_a_certificate_issued_before_versions_still_renders():
    """Certificates stored before migration 0015 lack the laboratory, dates and signature fields."""
    old = {key: CONTENT[key] for key in ("certificate_number", "lot", "product", "specifications", "results", "decision_rule", "released_by", "released_at")}
    layout = certificate_layout(old)
    assert layout.issue_line.startswith("Certificate MVO-2026-00007, version 1, issued 2026-03-05")
    assert dict(layout.signature)["Meaning of the signature"] == "released for shipment"
    assert layout.lab_name.startswith("Marrowvale Oils Ltd")  # from settings (invented demo default)
