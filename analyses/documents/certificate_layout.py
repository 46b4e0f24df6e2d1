"""What a certificate of analysis shows, and in what words, from its stored JSON content.

One layout for the PDF and the HTML, following the items ISO/IEC 17025:2017 §7.8.2.1 lists: the
laboratory, a unique number on every page, the customer, the items (product, lot, samples), the
methods, the dates of sampling, receipt, testing and issue, the results with their units, the
statement of conformity and its decision rule, who authorised the certificate, and that the
results relate only to the items tested. It leaves out what the JSON keeps for integrations and
for the lab itself: database ids, replicate values, unrounded numbers, internal notes, sources and
evidence tags, the reviewers.

Optional keys it reads when present (filled by the measurement-uncertainty work, issue 10), and
shows nothing for when absent:
- per result: ``expanded_uncertainty`` (U with k = 2, as reported, in the result's unit);
- top level: ``decision_rules`` (each distinct rule of the lines: its statement and the risk it
  implies, ILAC G8) and ``decision_rule_risk``.
"""
from __future__ import annotations

from dataclasses import dataclass, field
from datetime import UTC, date, datetime
from decimal import Decimal, InvalidOperation
from typing import Any

from django.conf import settings

TITLE = "Certificate of analysis"
RELATES_ONLY = (
    "The results relate only to the samples tested, as received. This certificate shall not be "
    "reproduced except in full without the written approval of the laboratory."
)
ELECTRONIC = "Signed electronically in the laboratory's records; valid without a handwritten signature."
END_MARK = "End of certificate"
VERDICT_WORDS = {"pass": "Conforms", "oos": "Does not conform"}


@dataclass(frozen=True)
class ResultRow:
    sample: str
    parameter: str
    method: str
    result: str
    unit: str
    uncertainty: str  # "" when the certificate data gives none
    limits: str
    verdict: str


@dataclass
class CertificateLayout:
    number: str
    lab_name: str
    lab_address: str
    issue_line: str
    notices: list[str] = field(default_factory=list)  # replaced / replaces, shown first
    facts: list[tuple[str, str]] = field(default_factory=list)
    rows: list[ResultRow] = field(default_factory=list)
    show_uncertainty: bool = False
    rule_lines: list[str] = field(default_factory=list)
    conformity: str = ""
    signature: list[tuple[str, str]] = field(default_factory=list)
    title: str = TITLE
    relates_only: str = RELATES_ONLY
    electronic: str = ELECTRONIC
    end_mark: str = END_MARK


def _rule_words(rule: Any) -> str:
    """A decision rule as the certificate states it: its statement, then its risk."""
    if isinstance(rule, dict):
        return " ".join(part for part in (rule.get("statement"), rule.get("risk")) if part)
    return str(rule)


def _day(value: str | None) -> str:
    return date.fromisoformat(value[:10]).isoformat() if value else ""


def _moment(value: str | None) -> str:
    if not value:
        return ""
    moment = datetime.fromisoformat(value.replace("Z", "+00:00"))
    if moment.tzinfo is not None:
        moment = moment.astimezone(UTC)
    return moment.strftime("%Y-%m-%d %H:%M UTC")


def _span(span: dict[str, str] | None) -> str:
    if not span:
        return "not recorded"
    first, last = _day(span.get("first")), _day(span.get("last"))
    return first if first == last else f"{first} to {last}"


def _quantity(value: str | None) -> str:
    try:
        amount = Decimal(value) if value not in (None, "") else None
    except InvalidOperation:
        return ""
    return f"{amount.normalize():,f} kg" if amount is not None else ""


def limits_text(minimum: str | None, maximum: str | None, unit: str) -> str:
    """The limits as the specification writes them (no rounding, no conversion)."""
    if minimum and maximum:
        return f"{minimum} to {maximum}"
    if maximum:
        return f"max. {maximum}"
    if minimum:
        return f"min. {minimum}"
    return "no limit (reported only)"


def verdict_text(verdict: str) -> str:
    return VERDICT_WORDS.get(verdict, verdict.replace("_", " ").capitalize())


def _method(row: dict[str, Any]) -> str:
    standards = ", ".join(row.get("standards") or [])
    return standards or row.get("method_title") or row.get("method", "")


def _specifications(content: dict[str, Any]) -> str:
    specs = content.get("specifications") or []
    parts = [f"version {s['version']}, effective from {_day(s.get('effective_from'))}" for s in specs]
    return "; ".join(parts) or "not recorded"


def certificate_layout(content: dict[str, Any], *, replaced_by: str | None = None) -> CertificateLayout:
    """The certificate's words and tables from its stored content. ``replaced_by`` (the number
    of a later version) marks a withdrawn version when it is shown again."""
    # certificates issued before migration 0015 do not name the lab: today's settings do
    laboratory = content.get("laboratory") or {"name": settings.LAB_NAME, "address": settings.LAB_ADDRESS}
    product, lot = content["product"], content["lot"]
    number = content["certificate_number"]
    version = content.get("version", 1)
    layout = CertificateLayout(
        number=number,
        lab_name=laboratory.get("name", ""),
        lab_address=laboratory.get("address", ""),
        issue_line=f"Certificate {number}, version {version}, issued {_moment(content.get('issued_at') or content.get('released_at'))}",
    )
    if replaced_by:
        layout.notices.append(f"Withdrawn: replaced by certificate {replaced_by}. Shown as it was issued.")
    if content.get("replaces"):
        reason = content.get("reissue_reason") or ""
        layout.notices.append(
            f"Replaces certificate {content['replaces']}, which is withdrawn." + (f" Reason for reissue: {reason}" if reason else "")
        )
    facts = [("Customer", content.get("customer") or "")]
    facts += [
        ("Product", f"{product['name']} ({product['code']})"),
        ("Lot", lot["code"]),
        ("Origin", "Production lot" if lot.get("origin") == "production" else "Incoming delivery"),
        ("Supplier", lot.get("supplier") or ""),
        ("Tank or container", lot.get("container_ref") or ""),
        ("Quantity", _quantity(lot.get("quantity_kg"))),
        ("Produced or delivered", _day(lot.get("produced_on"))),
        ("Specification", _specifications(content)),
    ]
    dates = content.get("dates") or {}
    if dates:
        facts += [("Sampled", _span(dates.get("sampling"))), ("Received", _span(dates.get("receipt"))), ("Tested", _span(dates.get("testing")))]
    layout.facts = [(label, value) for label, value in facts if value]

    for row in content.get("results", []):
        uncertainty = row.get("expanded_uncertainty")
        layout.rows.append(
            ResultRow(
                sample=row.get("sample", ""),
                parameter=row.get("method_title") or row.get("method", ""),
                method=_method(row),
                result=row.get("reported") or "",
                unit=row.get("unit") or "",
                uncertainty=f"± {uncertainty}" if uncertainty not in (None, "") else "",
                limits=limits_text(row.get("minimum"), row.get("maximum"), row.get("unit") or ""),
                verdict=verdict_text(row.get("verdict") or ""),
            )
        )
    layout.show_uncertainty = any(r.uncertainty for r in layout.rows)

    rules = [content.get("decision_rule") or "Simple acceptance, no guard band for measurement uncertainty."]
    # each distinct rule of the lines, in words with the risk it implies (ILAC G8)
    rules += [_rule_words(rule) for rule in content.get("decision_rules") or []]
    if content.get("decision_rule_risk"):
        rules.append(content["decision_rule_risk"])
    if layout.show_uncertainty:
        rules.append("U is the expanded uncertainty with a coverage factor k = 2 (about 95 % coverage).")
    layout.rule_lines = rules
    layout.conformity = content.get("statement_of_conformity") or ""

    released_by = content.get("released_by_name") or content.get("released_by") or ""
    layout.signature = [
        ("Released by", released_by),
        ("Released at", _moment(content.get("released_at"))),
        ("Meaning of the signature", content.get("signature_meaning") or "released for shipment"),
    ]
    issued_by = content.get("issued_by")
    if issued_by and content.get("replaces"):
        layout.signature.append(("This version issued by", issued_by))
    return layout
