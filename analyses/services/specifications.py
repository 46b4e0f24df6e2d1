"""Specifications: drafted, approved by QA, effective from a date, versioned.

A line is given as a mapping::

    {"method": "av",                 # plugin code
     "minimum": "0.1", "maximum": "0.6",   # Decimal strings (or numbers) in the plugin's unit,
                                     # kept as written, in plain notation
     "codex_oil_type": "refined",    # instead of limits: the plugin's Codex default
     "release_critical": True,       # default True
     "comparison": "absolute",       # or "rounding" (ASTM E29); default absolute
     "turnaround_days": 3,           # default due date offset from receipt
     "decision_rule": "guard_band",  # simple (default), guard_band or non_binary (the lab opts
                                     # in: OLEOTRACE_NON_BINARY_STATEMENTS); verdicts.py
     "guard_band_multiple": "1",     # w = this x U (k = 2); default 1, i.e. w = U
     "basis": "palmitic"}            # where the method has one (FFA): what the result is
                                     # expressed as; the line's unit follows ("% as palmitic")

Without ``basis``, a line of such a method takes the conventional basis of its Codex oil
type, else of the product's oil type (``ResultBasis.by_oil_type``: palm oils as palmitic,
lauric oils as lauric), else the method's default (oleic).

Errors name the line and field: ``lines.2.maximum``. An approved specification is never
edited; ``specification_revise`` starts a new draft version from it.
"""
from __future__ import annotations

import datetime as dt
from collections.abc import Mapping, Sequence
from decimal import Decimal, InvalidOperation
from typing import Any

from django.conf import settings
from django.db import transaction
from django.db.models import Max
from django.utils import timezone

from analyses.audit import audit_append, created, snapshot
from analyses.errors import Conflict, InvalidInput
from analyses.models import AuditAction, Comparison, DecisionRule, Product, Specification, SpecificationLine, SpecificationStatus
from analyses.services.access import Actor, fetch, require_permission
from plugins.contract import MethodPlugin, join_parameter, split_parameter
from plugins.registry import UnknownMethod, get_registry

SPECIFICATION_FIELDS = ("product", "version", "status", "effective_from", "note", "revised_from")
LINE_FIELDS = (
    "position", "method_code", "unit", "minimum", "maximum", "comparison",
    "release_critical", "turnaround_days", "limits_source", "basis", "decision_rule", "guard_band_multiple",
)
LINE_KEYS = {
    "method", "minimum", "maximum", "codex_oil_type", "release_critical", "comparison", "turnaround_days", "basis",
    "decision_rule", "guard_band_multiple",
}
MULTIPLE_MAX_CHARS = SpecificationLine._meta.get_field("guard_band_multiple").max_length


# what a SpecificationLine keeps of a limit, written out
LIMIT_MAX_CHARS = SpecificationLine._meta.get_field("maximum").max_length


def limit_as_written(raw: Any, field: str) -> str:
    """A limit as a Decimal string in plain notation, keeping the places it was written with
    ("0.60" stays "0.60", "0.0000001" stays so, not "1E-7"; "1E+1" is written out "10").
    InvalidInput on ``field`` when it is not a finite number or does not fit in
    ``LIMIT_MAX_CHARS`` characters written out."""
    if raw is None or raw == "":
        return ""
    if isinstance(raw, bool):
        raise InvalidInput.for_field(field, "must be a number")
    text = repr(raw) if isinstance(raw, float) else str(raw).strip()
    try:
        value = Decimal(text)
    except InvalidOperation:
        raise InvalidInput.for_field(field, f"must be a number, got {raw!r}") from None
    if not value.is_finite():
        raise InvalidInput.for_field(field, "must be a finite number")
    too_long = f"must be at most {LIMIT_MAX_CHARS} characters written out in plain notation"
    # checked before writing it out: "1E-999999999" would be a billion characters
    if value.adjusted() >= LIMIT_MAX_CHARS or value.as_tuple().exponent <= -LIMIT_MAX_CHARS:
        raise InvalidInput.for_field(field, too_long)
    plain = format(value.copy_abs() if value.is_zero() else value, "f")
    if len(plain) > LIMIT_MAX_CHARS:
        raise InvalidInput.for_field(field, too_long)
    return plain


def limits_given_or_codex(
    plugin: MethodPlugin, minimum: Any, maximum: Any, oil_type: str, *, fields: tuple[str, str, str],
    component: str = "",
) -> tuple[str, str, str]:
    """The limits as written, or the plugin's Codex default for ``oil_type``: (minimum, maximum,
    source), "" for each one not set. ``fields`` names (minimum, maximum, oil type) in errors.
    ``component``: a profile plugin's component, whose own defaults apply (the CXS 210
    composition ranges of each fatty acid)."""
    minimum_field, maximum_field, oil_type_field = fields
    low = limit_as_written(minimum, minimum_field)
    high = limit_as_written(maximum, maximum_field)
    if not oil_type:
        return low, high, ""
    if low or high:
        raise InvalidInput.for_field(oil_type_field, "give either limits or a Codex oil type, not both")
    holder = plugin.component_spec(component) if component else plugin
    default = holder.limits_for(oil_type)
    if default is None:
        known = ", ".join(sorted(limit.oil_type for limit in holder.spec_limits)) or "none"
        named = join_parameter(plugin.code, component)
        raise InvalidInput.for_field(
            oil_type_field, f"method {named} has no default limits for {oil_type!r} (known: {known})"
        )
    return (
        limit_as_written(default.minimum, minimum_field),
        limit_as_written(default.maximum, maximum_field),
        f"{default.source}; {oil_type}; {default.evidence}",
    )


def _line_basis(plugin: MethodPlugin, raw: Any, prefix: str, oil_types: Sequence[str]) -> tuple[str, str]:
    """The line's basis and the unit that follows from it: ("", result_unit) for a method
    without a basis. The first of ``oil_types`` given names the conventional basis."""
    given = str(raw.get("basis") or "").strip().lower()
    if plugin.basis is None:
        if given:
            raise InvalidInput.for_field(f"{prefix}.basis", f"method {plugin.code} has no basis to choose")
        return "", plugin.result_unit
    choice = next(spec for spec in plugin.inputs if spec.name == plugin.basis.input_name)
    if given:
        if given not in choice.choices:
            raise InvalidInput.for_field(f"{prefix}.basis", f"must be one of {', '.join(choice.choices)}, got {given!r}")
        basis = given
    else:
        # the first oil type given decides: a Codex oil type before the product's
        oil_type = next((name for name in oil_types if name), "")
        basis = plugin.basis.by_oil_type.get(oil_type) or choice.default
        if basis is None:  # no conventional basis (OSI's temperature): the line must name one
            raise InvalidInput.for_field(
                f"{prefix}.basis",
                f"is required: method {plugin.code}'s result depends on it; give one of {', '.join(choice.choices)}",
            )
    return basis, plugin.unit_for({plugin.basis.input_name: basis})


def _line_component(plugin: MethodPlugin, code: str, prefix: str) -> str:
    """The component a line on a profile method targets ("fac:C18:2" -> "C18:2"); a profile
    method's line must name one, a single-value method's line none."""
    component = split_parameter(code)[1]
    if plugin.components and not component:
        names = ", ".join(c.name for c in plugin.components)
        raise InvalidInput.for_field(
            f"{prefix}.method",
            f"method {plugin.code} reports a profile: name the component the line limits, e.g. {plugin.code}:"
            f"{plugin.components[0].name} or {plugin.code}:{plugin.headline} (components: {names})",
        )
    return component


def _clean_line(raw: Any, index: int, product_oil_type: str = "") -> dict[str, Any]:
    prefix = f"lines.{index}"
    if not isinstance(raw, Mapping):
        raise InvalidInput.for_field(prefix, "must be an object")
    unknown = sorted(set(raw) - LINE_KEYS)
    if unknown:
        raise InvalidInput.for_field(f"{prefix}.{unknown[0]}", f"is not a line field (expected: {', '.join(sorted(LINE_KEYS))})")
    code = str(raw.get("method") or "").strip()
    if not code:
        raise InvalidInput.for_field(f"{prefix}.method", "is required")
    try:
        plugin = get_registry().get(code)
    except UnknownMethod as exc:
        raise InvalidInput.for_field(f"{prefix}.method", str(exc)) from None
    component = _line_component(plugin, code, prefix)
    oil_type = str(raw.get("codex_oil_type") or "").strip()
    minimum, maximum, source = limits_given_or_codex(
        plugin, raw.get("minimum"), raw.get("maximum"), oil_type,
        fields=(f"{prefix}.minimum", f"{prefix}.maximum", f"{prefix}.codex_oil_type"), component=component,
    )
    if not minimum and not maximum:
        raise InvalidInput.for_field(f"{prefix}.minimum", "give a minimum, a maximum, or a Codex oil type")
    basis, unit = _line_basis(plugin, raw, prefix, (oil_type, product_oil_type))
    if component:
        unit = plugin.component_spec(component).unit
    if minimum and maximum and Decimal(minimum) > Decimal(maximum):
        raise InvalidInput.for_field(f"{prefix}.maximum", f"must not be below the minimum {minimum}")
    comparison = str(raw.get("comparison") or Comparison.ABSOLUTE)
    if comparison not in Comparison.values:
        raise InvalidInput.for_field(f"{prefix}.comparison", f"must be one of {', '.join(Comparison.values)}")
    release_critical = raw.get("release_critical", True)
    if not isinstance(release_critical, bool):
        raise InvalidInput.for_field(f"{prefix}.release_critical", "must be true or false")
    turnaround = raw.get("turnaround_days", 3)
    if isinstance(turnaround, bool) or not isinstance(turnaround, int) or not 0 <= turnaround <= 365:
        raise InvalidInput.for_field(f"{prefix}.turnaround_days", "must be a whole number of days, 0 to 365")
    rule, multiple = _decision_rule(raw, prefix)
    return {
        "decision_rule": rule,
        "guard_band_multiple": multiple,
        "position": index,
        "method_code": join_parameter(plugin.code, component) if component else code,
        "unit": unit,
        "minimum": minimum,
        "maximum": maximum,
        "comparison": comparison,
        "release_critical": release_critical,
        "turnaround_days": turnaround,
        "limits_source": source,
        "basis": basis,
    }


def _decision_rule(raw: Mapping[str, Any], prefix: str) -> tuple[str, str]:
    """The line's decision rule and guard-band multiple (a positive decimal, kept as written)."""
    rule = str(raw.get("decision_rule") or DecisionRule.SIMPLE)
    if rule not in DecisionRule.values:
        raise InvalidInput.for_field(f"{prefix}.decision_rule", f"must be one of {', '.join(DecisionRule.values)}")
    if rule == DecisionRule.NON_BINARY and not settings.OLEOTRACE_NON_BINARY_STATEMENTS:
        raise InvalidInput.for_field(
            f"{prefix}.decision_rule",
            "non_binary needs the laboratory's opt-in (OLEOTRACE_NON_BINARY_STATEMENTS=1): ILAC G8's conditional "
            "statements must be agreed with the customer",
        )
    given = raw.get("guard_band_multiple")
    if given is None or given == "":
        return rule, "1"
    try:
        multiple = Decimal(str(given).strip())
    except InvalidOperation:
        raise InvalidInput.for_field(f"{prefix}.guard_band_multiple", "must be a decimal number, e.g. 1 or 1.5") from None
    if isinstance(given, bool) or not multiple.is_finite() or multiple <= 0 or multiple > 10:
        raise InvalidInput.for_field(f"{prefix}.guard_band_multiple", "must be a number above 0 and at most 10")
    if rule == DecisionRule.SIMPLE and multiple != 1:
        raise InvalidInput.for_field(f"{prefix}.guard_band_multiple", "applies to guard_band and non_binary lines only")
    written = format(multiple, "f")
    if len(written) > MULTIPLE_MAX_CHARS:
        raise InvalidInput.for_field(f"{prefix}.guard_band_multiple", f"must be at most {MULTIPLE_MAX_CHARS} characters")
    return rule, written


def _clean_lines(lines: Sequence[Any], product_oil_type: str = "") -> list[dict[str, Any]]:
    if not isinstance(lines, Sequence) or isinstance(lines, (str, bytes)) or not lines:
        raise InvalidInput.for_field("lines", "give at least one line")
    cleaned = [_clean_line(raw, index, product_oil_type) for index, raw in enumerate(lines)]
    seen: dict[str, int] = {}
    for index, line in enumerate(cleaned):
        if line["method_code"] in seen:
            raise InvalidInput.for_field(
                f"lines.{index}.method", f"method {line['method_code']} already on line {seen[line['method_code']]}"
            )
        seen[line["method_code"]] = index
    return cleaned


def _oil_type_of(product: Product | int) -> str:
    """The product's oil type, for the conventional basis of its lines; "" when there is none
    (an unknown product is refused later, where it is fetched)."""
    if isinstance(product, Product):
        return product.oil_type
    return _first_or_blank(Product.objects.filter, product, "oil_type")


def _oil_type_of_specification(specification: Specification | int) -> str:
    pk = specification.pk if isinstance(specification, Specification) else specification
    return _first_or_blank(Specification.objects.filter, pk, "product__oil_type")


def _first_or_blank(filter_by: Any, pk: Any, field: str) -> str:
    if isinstance(pk, bool) or not isinstance(pk, (int, str)):
        return ""
    try:
        return filter_by(pk=pk).values_list(field, flat=True).first() or ""
    except (TypeError, ValueError, OverflowError):  # not an id: refused where it is fetched
        return ""


def _write_lines(actor: Actor, specification: Specification, cleaned: list[dict[str, Any]]) -> None:
    for values in cleaned:
        line = SpecificationLine.objects.create(specification=specification, **values)
        audit_append(actor, AuditAction.CREATE, line, created(line, LINE_FIELDS))


def _effective_date(value: Any) -> dt.date:
    if isinstance(value, dt.datetime) or not isinstance(value, dt.date):
        try:
            return dt.date.fromisoformat(str(value))
        except ValueError:
            raise InvalidInput.for_field("effective_from", "must be a date, YYYY-MM-DD") from None
    return value


def specification_create(
    actor: Actor,
    product: Product | int,
    *,
    effective_from: dt.date | str,
    lines: Sequence[Mapping[str, Any]],
    note: str = "",
) -> Specification:
    """A new draft specification (the product's next version) with its lines.
    Needs ``draft_specification`` (lab manager, QA, admin)."""
    require_permission(actor, "draft_specification", "draft specifications")
    effective = _effective_date(effective_from)
    cleaned = _clean_lines(lines, _oil_type_of(product))
    with transaction.atomic():
        product = fetch(Product, product, lock=True)  # serialises version numbering per product
        version = (product.specifications.aggregate(top=Max("version"))["top"] or 0) + 1
        specification = Specification.objects.create(
            product=product,
            version=version,
            effective_from=effective,
            note=(note or "").strip(),
            created_by=actor,
            created_at=timezone.now(),
        )
        audit_append(actor, AuditAction.CREATE, specification, created(specification, SPECIFICATION_FIELDS))
        _write_lines(actor, specification, cleaned)
    return specification


def specification_lines_replace(
    actor: Actor, specification: Specification | int, *, lines: Sequence[Mapping[str, Any]]
) -> Specification:
    """Replace all lines of a draft. Conflict when the specification is approved."""
    require_permission(actor, "draft_specification", "edit specifications")
    cleaned = _clean_lines(lines, _oil_type_of_specification(specification))
    with transaction.atomic():
        specification = fetch(Specification, specification, lock=True)
        if specification.is_approved:
            raise Conflict(f"specification {specification.pk} is approved and cannot be changed; revise it instead")
        for line in specification.lines.all():
            audit_append(
                actor, AuditAction.CHANGE, line,
                {name: [value, None] for name, value in snapshot(line, LINE_FIELDS).items()},
                reason="line removed from draft",
            )
            line.delete()
        _write_lines(actor, specification, cleaned)
    return specification


def specification_approve(actor: Actor, specification: Specification | int) -> Specification:
    """QA approves a draft; from now on it is never edited. Needs ``approve_specification``."""
    require_permission(actor, "approve_specification", "approve specifications")
    with transaction.atomic():
        specification = fetch(Specification, specification, lock=True)
        if specification.is_approved:
            raise Conflict(f"specification {specification.pk} is already approved")
        if not specification.lines.exists():
            raise Conflict(f"specification {specification.pk} has no lines")
        specification.status = SpecificationStatus.APPROVED
        specification.approved_by = actor
        specification.approved_at = timezone.now()
        specification.save(update_fields=["status", "approved_by", "approved_at"])
        audit_append(
            actor, AuditAction.TRANSITION, specification,
            {"status": [SpecificationStatus.DRAFT, SpecificationStatus.APPROVED]},
        )
    return specification


def specification_revise(
    actor: Actor,
    specification: Specification | int,
    *,
    effective_from: dt.date | str,
    lines: Sequence[Mapping[str, Any]] | None = None,
    note: str = "",
) -> Specification:
    """A new draft version of an approved specification, with its lines copied (or
    ``lines`` instead). The approved one stays as it is."""
    require_permission(actor, "draft_specification", "revise specifications")
    effective = _effective_date(effective_from)
    cleaned = _clean_lines(lines, _oil_type_of_specification(specification)) if lines is not None else None
    with transaction.atomic():
        source = fetch(Specification, specification, lock=True)
        if not source.is_approved:
            raise Conflict(f"specification {source.pk} is a draft; edit it instead of revising it")
        product = Product.objects.select_for_update().get(pk=source.product_id)
        version = (product.specifications.aggregate(top=Max("version"))["top"] or 0) + 1
        revision = Specification.objects.create(
            product=product,
            version=version,
            effective_from=effective,
            note=(note or "").strip(),
            revised_from=source,
            created_by=actor,
            created_at=timezone.now(),
        )
        audit_append(actor, AuditAction.CREATE, revision, created(revision, SPECIFICATION_FIELDS))
        if cleaned is None:
            cleaned = [snapshot(line, LINE_FIELDS) for line in source.lines.all()]
        _write_lines(actor, revision, cleaned)
    return revision
