"""Reagent kinds, titrant lots and their standardisations.

A standardisation's concentration comes from the stoichiometry of its primary standard
(``analyses.traceability.standardisation``), is the mean of its replicates, and is refused
when the replicates' relative spread exceeds the kind's limit. Its standard uncertainty is
QUAM example A2's budget: repeatability (from the replicates), the mass (the balance's
calibration, weighed by difference), the purity, the molar mass (IUPAC atomic weights) and
the titre (the burette's calibration). A wrong standardisation is never edited: it is
superseded by a new one with a reason.
"""
from __future__ import annotations

import datetime as dt
from collections.abc import Mapping, Sequence
from decimal import Decimal
from typing import Any

from django.db import transaction
from django.utils import timezone

from analyses.audit import audit_append, created
from analyses.errors import Conflict, InvalidInput
from analyses.models import (
    AuditAction,
    Instrument,
    InstrumentKind,
    ReagentKind,
    ReagentLot,
    Standardisation,
    StandardisationStatus,
    TitrantSubstance,
)
from analyses.models.reagents import DEFAULT_SPREAD_LIMIT, DEFAULT_SPREAD_SOURCE, SUBSTANCE_REACTION
from analyses.selectors.traceability import instrument_facts, lot_facts
from analyses.services.access import (
    Actor,
    fetch,
    refuse_raw_data_edit_by_qa,
    require_permission,
    required_text,
)
from analyses.services.quantities import a_date, plain_number, quantity
from analyses.traceability.concentration import molarity
from analyses.traceability.standardisation import (
    PRIMARY_STANDARDS,
    STANDARDISED_BASE,
    Replicate,
    StandardisationError,
    molar_mass,
    standardise,
    titrant_ratio,
    tolerance_as_u,
    weighing_by_difference_u,
)
from analyses.traceability.usability import instrument_refusal, lot_refusal
from plugins.units import UnitProblem

KIND_FIELDS = (
    "name", "substance", "solvent", "nominal_concentration", "nominal_as_written", "equivalents_per_mole",
    "validity_days", "spread_limit", "spread_limit_source",
)
KIND_SETTINGS = ("validity_days", "spread_limit", "spread_limit_source")
LOT_FIELDS = ("kind", "code", "prepared_on", "expires_on", "prepared_by")
STANDARDISATION_FIELDS = (
    "lot", "primary_standard", "standard_reference", "purity", "purity_uncertainty", "molar_mass",
    "molar_mass_uncertainty", "reference", "replicates", "blank", "balance", "burette", "concentrations",
    "concentration", "uncertainty", "relative_spread", "spread_limit", "performed_at", "valid_until", "status",
    "supersedes", "reason",
)
TITRATING_KINDS = (InstrumentKind.BURETTE, InstrumentKind.TITRATOR)


def _whole(raw: Any, field: str, *, minimum: int = 1, maximum: int = 3650) -> int:
    if isinstance(raw, bool) or not isinstance(raw, int) or not minimum <= raw <= maximum:
        raise InvalidInput.for_field(field, f"must be a whole number from {minimum} to {maximum}")
    return raw


def _spread_limit(raw: Any) -> Decimal:
    limit = plain_number(raw, "spread_limit", allow_zero=False)
    if limit >= 1:
        raise InvalidInput.for_field("spread_limit", "is a fraction of the mean (0.002 = 0.2 %); must be below 1")
    return limit


def reagent_kind_create(
    actor: Actor,
    *,
    name: str,
    substance: str,
    nominal_concentration: str,
    validity_days: int,
    equivalents_per_mole: int = 1,
    solvent: str = "water",
    spread_limit: str = DEFAULT_SPREAD_LIMIT,
    spread_limit_source: str = DEFAULT_SPREAD_SOURCE,
) -> ReagentKind:
    """A kind of volumetric solution, e.g. "KOH in ethanol, 0.5 mol/L". The nominal
    concentration may be written in mol/L or as a normality ("0.1 N"), which is divided by
    ``equivalents_per_mole``. Needs ``manage_reagent_kinds`` (lab manager, admin)."""
    require_permission(actor, "manage_reagent_kinds", "register reagent kinds")
    name = required_text(name, "name")
    if substance not in TitrantSubstance.values:
        raise InvalidInput.for_field("substance", f"must be one of {', '.join(TitrantSubstance.values)}")
    equivalents = _whole(equivalents_per_mole, "equivalents_per_mole", maximum=10)
    written = required_text(nominal_concentration, "nominal_concentration")
    try:
        nominal = molarity(written, equivalents)
    except UnitProblem as problem:
        raise InvalidInput.for_field("nominal_concentration", str(problem)) from None
    days = _whole(validity_days, "validity_days")
    limit = _spread_limit(spread_limit)
    source = required_text(spread_limit_source, "spread_limit_source")
    if ReagentKind.objects.filter(name=name).exists():
        raise InvalidInput.for_field("name", f"reagent kind {name!r} already exists")
    with transaction.atomic():
        kind = ReagentKind.objects.create(
            name=name, substance=substance, solvent=(solvent or "").strip(), nominal_concentration=str(nominal),
            nominal_as_written=written, equivalents_per_mole=equivalents, validity_days=days,
            spread_limit=str(limit), spread_limit_source=source, created_by=actor, created_at=timezone.now(),
        )
        audit_append(actor, AuditAction.CREATE, kind, created(kind, KIND_FIELDS))
    return kind


def reagent_kind_change(
    actor: Actor, kind: ReagentKind | int, *, reason: str, **settings: Any
) -> ReagentKind:
    """Change a kind's settings (``validity_days``, ``spread_limit``, ``spread_limit_source``)
    with a reason; standardisations already recorded keep the validity and limit they had."""
    require_permission(actor, "manage_reagent_kinds", "change reagent kinds")
    reason = required_text(reason, "reason")
    unknown = sorted(set(settings) - set(KIND_SETTINGS))
    if unknown:
        raise InvalidInput.for_field(unknown[0], f"cannot be changed (only: {', '.join(KIND_SETTINGS)})")
    after: dict[str, Any] = {}
    if "validity_days" in settings:
        after["validity_days"] = _whole(settings["validity_days"], "validity_days")
    if "spread_limit" in settings:
        after["spread_limit"] = str(_spread_limit(settings["spread_limit"]))
    if "spread_limit_source" in settings:
        after["spread_limit_source"] = required_text(settings["spread_limit_source"], "spread_limit_source")
    with transaction.atomic():
        kind = fetch(ReagentKind, kind, lock=True, label="reagent kind")
        changes = {name: [getattr(kind, name), value] for name, value in after.items() if getattr(kind, name) != value}
        if changes:
            for name, value in after.items():
                setattr(kind, name, value)
            kind.save(update_fields=list(after))
            audit_append(actor, AuditAction.CHANGE, kind, changes, reason=reason)
    return kind


def reagent_lot_register(
    actor: Actor,
    *,
    kind: ReagentKind | int,
    code: str,
    prepared_on: dt.date | str,
    expires_on: dt.date | str,
    prepared_by: str,
) -> ReagentLot:
    """A titrant lot, prepared in the lab or received. Needs ``register_reagent_lot``
    (analyst, lab manager, admin)."""
    require_permission(actor, "register_reagent_lot", "register titrant lots")
    code = required_text(code, "code")
    prepared = a_date(prepared_on, "prepared_on")
    expires = a_date(expires_on, "expires_on")
    if expires < prepared:
        raise InvalidInput.for_field("expires_on", "must not be before prepared_on")
    if prepared > timezone.localdate():
        raise InvalidInput.for_field("prepared_on", "must not be in the future")
    who = required_text(prepared_by, "prepared_by")
    kind = fetch(ReagentKind, kind, label="reagent kind")
    if ReagentLot.objects.filter(code=code).exists():
        raise InvalidInput.for_field("code", f"titrant lot {code!r} already exists")
    with transaction.atomic():
        lot = ReagentLot.objects.create(
            kind=kind, code=code, prepared_on=prepared, expires_on=expires, prepared_by=who,
            created_by=actor, created_at=timezone.now(),
        )
        audit_append(actor, AuditAction.CREATE, lot, created(lot, LOT_FIELDS))
    return lot


def _instrument(ref: Any, field: str, kinds: Sequence[str], now: dt.datetime) -> Instrument:
    """The usable instrument ``ref`` of one of ``kinds``; Conflict naming it otherwise."""
    if ref is None:
        raise InvalidInput.for_field(field, "is required")
    instrument = fetch(Instrument, ref, label="instrument")
    if instrument.kind not in kinds:
        raise Conflict(f"instrument {instrument.asset_id} is a {instrument.kind}; {field} must be a {' or '.join(kinds)}", missing=[field])
    refusal = instrument_refusal(instrument_facts(instrument), now)
    if refusal:
        raise Conflict(refusal, missing=[field])
    return instrument


def _calibration_u(instrument: Instrument, unit: str, *, tolerance_to_u) -> Decimal:
    """The standard uncertainty of one reading, from the latest calibration: its stated
    standard uncertainty, else its tolerance converted; zero when it states neither."""
    calibration = instrument.calibrations.order_by("-calibrated_on", "-id").first()
    if calibration is None:
        return Decimal(0)
    if calibration.standard_uncertainty:
        return quantity(f"{calibration.standard_uncertainty} {calibration.unit or unit}", unit, "calibration")
    if calibration.tolerance:
        return tolerance_to_u(quantity(f"{calibration.tolerance} {calibration.unit or unit}", unit, "calibration"))
    return Decimal(0)


def _replicates(raw: Any, amount_key: str, amount_unit: str) -> list[Replicate]:
    if isinstance(raw, (str, bytes, Mapping)) or not isinstance(raw, Sequence) or len(raw) < 2:
        raise InvalidInput.for_field("replicates", f'give at least two replicates, each {{"{amount_key}": ..., "titre": ...}}')
    replicates = []
    for index, item in enumerate(raw):
        if not isinstance(item, Mapping) or set(item) != {amount_key, "titre"}:
            raise InvalidInput.for_field(f"replicates.{index}", f'must be {{"{amount_key}": ..., "titre": ...}}')
        replicates.append(Replicate(
            quantity(item[amount_key], amount_unit, f"replicates.{index}.{amount_key}"),
            quantity(item["titre"], "mL", f"replicates.{index}.titre"),
        ))
    return replicates


def _standardisation_row(
    actor: Actor,
    lot: ReagentLot,
    *,
    primary_standard: str,
    replicates: Any,
    blank: Any,
    purity: Any,
    purity_uncertainty: Any,
    standard_reference: str,
    reference: Standardisation | int | None,
    balance: Any,
    burette: Any,
    performed_at: dt.datetime | None,
) -> Standardisation:
    """An unsaved standardisation, computed and checked; raises before anything is written."""
    now = timezone.now()
    performed = performed_at or now
    if performed > now + dt.timedelta(minutes=5):
        raise InvalidInput.for_field("performed_at", "must not be in the future")
    kind = lot.kind
    reaction = SUBSTANCE_REACTION[kind.substance]
    blank_ml = quantity(blank if blank not in (None, "") else "0", "mL", "blank", allow_zero=True)
    titrating = _instrument(burette, "burette", TITRATING_KINDS, performed)
    titre_u = _calibration_u(titrating, "mL", tolerance_to_u=tolerance_as_u)
    fields: dict[str, Any] = {}
    if primary_standard == STANDARDISED_BASE:
        if reaction != "acid":
            raise InvalidInput.for_field("primary_standard", f"a standardised base standardises acids, not {kind.substance}")
        if reference is None:
            raise InvalidInput.for_field("reference", "name the base's standardisation titrated against")
        ref = fetch(Standardisation, reference, label="standardisation")
        if SUBSTANCE_REACTION[ref.lot.kind.substance] != "base":
            raise InvalidInput.for_field("reference", f"standardisation {ref.pk} is of {ref.lot.kind.substance}, not a base")
        refusal = lot_refusal(lot_facts(ref.lot), performed)
        if refusal or ref.status != StandardisationStatus.CURRENT:
            raise Conflict(refusal or f"standardisation {ref.pk} is superseded", missing=["reference"])
        parsed = _replicates(replicates, "aliquot", "mL")
        try:
            outcome = standardise(
                parsed, blank=blank_ml, spread_limit=Decimal(kind.spread_limit),
                ratio=titrant_ratio(ref.lot.kind.equivalents_per_mole, kind.equivalents_per_mole),
                reference_concentration=Decimal(ref.concentration), reference_u=Decimal(ref.uncertainty),
                amount_u=titre_u, titre_u=titre_u,
            )
        except StandardisationError as exc:
            raise InvalidInput.for_field(exc.field, exc.reason) from None
        fields.update(reference=ref, balance=None)
    else:
        standard = PRIMARY_STANDARDS.get(primary_standard)
        if standard is None:
            raise InvalidInput.for_field(
                "primary_standard", f"must be one of {', '.join([*PRIMARY_STANDARDS, STANDARDISED_BASE])}"
            )
        if standard.titrant_reaction != reaction:
            raise InvalidInput.for_field(
                "primary_standard", f"{standard.name} does not standardise {kind.substance} ({kind.name})"
            )
        weighing = _instrument(balance, "balance", (InstrumentKind.BALANCE,), performed)
        mass_u = weighing_by_difference_u(_calibration_u(weighing, "g", tolerance_to_u=lambda t: t / Decimal(3).sqrt()))
        p = plain_number(purity if purity not in (None, "") else "1", "purity", allow_zero=False)
        if p > 1:
            raise InvalidInput.for_field("purity", "is a mass fraction; must be at most 1")
        u_p = plain_number(purity_uncertainty if purity_uncertainty not in (None, "") else "0", "purity_uncertainty")
        mass, mass_of_mole_u = molar_mass(standard)
        parsed = _replicates(replicates, "mass", "g")
        try:
            outcome = standardise(
                parsed, blank=blank_ml, spread_limit=Decimal(kind.spread_limit),
                ratio=titrant_ratio(standard.equivalents, kind.equivalents_per_mole),
                purity=p, purity_u=u_p, molar_mass=mass, molar_mass_u=mass_of_mole_u,
                amount_u=mass_u, titre_u=titre_u,
            )
        except StandardisationError as exc:
            raise InvalidInput.for_field(exc.field, exc.reason) from None
        fields.update(
            balance=weighing, purity=str(p), purity_uncertainty=str(u_p), molar_mass=str(mass),
            molar_mass_uncertainty=str(mass_of_mole_u),
        )
    if not outcome.agrees:
        raise InvalidInput.for_field(
            "replicates",
            f"relative spread {outcome.relative_spread:.2e} exceeds the limit {kind.spread_limit} of {kind.name} "
            f"({kind.spread_limit_source}); repeat the standardisation",
        )
    return Standardisation(
        lot=lot, primary_standard=primary_standard, standard_reference=(standard_reference or "").strip(),
        replicates=[{k: str(v) for k, v in item.items()} for item in replicates], blank=str(blank_ml),
        burette=titrating, concentrations=[str(c) for c in outcome.concentrations],
        concentration=str(outcome.concentration), uncertainty=str(outcome.uncertainty),
        relative_spread=str(outcome.relative_spread), spread_limit=kind.spread_limit,
        performed_by=actor, performed_at=performed, valid_until=performed + dt.timedelta(days=kind.validity_days),
        **fields,
    )


def standardisation_record(
    actor: Actor,
    lot: ReagentLot | int,
    *,
    primary_standard: str,
    replicates: Sequence[Mapping[str, Any]],
    burette: Instrument | int,
    balance: Instrument | int | None = None,
    blank: Any = "0",
    purity: Any = "1",
    purity_uncertainty: Any = "0",
    standard_reference: str = "",
    reference: Standardisation | int | None = None,
    performed_at: dt.datetime | None = None,
) -> Standardisation:
    """Standardise a titrant lot: replicates ``[{"mass": "0.3888 g", "titre": "18.64"}, ...]``
    against a primary standard (``khp``, ``k2cr2o7``, ``kio3``, ``na2co3``, ``tris``) weighed on
    ``balance``, or ``[{"aliquot": "15.00", "titre": ...}]`` against the ``reference``
    standardisation of a base (``standardised_base``). The balance and burette must be usable.
    Refused (400 on replicates) when their relative spread exceeds the kind's limit. Needs
    ``record_standardisation`` (analyst, admin); a QA reviewer never records raw data."""
    require_permission(actor, "record_standardisation", "record standardisations")
    refuse_raw_data_edit_by_qa(actor)
    lot = fetch(ReagentLot, lot, label="titrant lot")
    with transaction.atomic():
        lot = ReagentLot.objects.select_for_update().select_related("kind").get(pk=lot.pk)
        if timezone.localdate() > lot.expires_on:
            raise Conflict(f"titrant lot {lot.code} expired on {lot.expires_on.isoformat()}", missing=["lot"])
        row = _standardisation_row(
            actor, lot, primary_standard=primary_standard, replicates=replicates, blank=blank, purity=purity,
            purity_uncertainty=purity_uncertainty, standard_reference=standard_reference, reference=reference,
            balance=balance, burette=burette, performed_at=performed_at,
        )
        row.save(force_insert=True)
        audit_append(actor, AuditAction.CREATE, row, created(row, STANDARDISATION_FIELDS))
    return row


def standardisation_supersede(
    actor: Actor, standardisation: Standardisation | int, *, reason: str, **record: Any
) -> Standardisation:
    """Replace a wrong standardisation: a new one (same arguments as
    ``standardisation_record``) that ``supersedes`` it, with ``reason``; the old one keeps its
    figures, becomes ``superseded`` and is never used again. Results already entered keep
    the standardisation they used."""
    require_permission(actor, "record_standardisation", "supersede standardisations")
    refuse_raw_data_edit_by_qa(actor)
    reason = required_text(reason, "reason")
    with transaction.atomic():
        old = fetch(Standardisation, standardisation, lock=True, label="standardisation")
        if old.status != StandardisationStatus.CURRENT:
            raise Conflict(f"standardisation {old.pk} is already superseded", missing=["standardisation"])
        lot = ReagentLot.objects.select_related("kind").get(pk=old.lot_id)
        row = _standardisation_row(actor, lot, **{"standard_reference": "", "reference": None, "balance": None,
                                                   "blank": "0", "purity": "1", "purity_uncertainty": "0",
                                                   "performed_at": None, **record})
        old.status = StandardisationStatus.SUPERSEDED
        old.status_reason = reason
        old.save(update_fields=["status", "status_reason"])
        audit_append(
            actor, AuditAction.TRANSITION, old,
            {"status": [StandardisationStatus.CURRENT, StandardisationStatus.SUPERSEDED]}, reason=reason,
        )
        row.supersedes = old
        row.reason = reason
        row.save(force_insert=True)
        audit_append(actor, AuditAction.CREATE, row, created(row, STANDARDISATION_FIELDS), reason=reason)
    return row
