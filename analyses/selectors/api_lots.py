"""Reads the lot endpoints need beyond ``lists`` and ``certificates``."""
from __future__ import annotations

from analyses.errors import InvalidInput, NotFound
from analyses.models import Certificate, Lot
from analyses.services.access import ID_MAX


def _lot(lot_id: int) -> Lot:
    # the lot first: a lookup by pk names no row for an id beyond the database's integers,
    # where one through the foreign key would overflow on SQLite
    lot = Lot.objects.filter(pk=lot_id).first() if lot_id <= ID_MAX else None
    if lot is None:
        raise NotFound(f"lot {lot_id} not found")
    return lot


def _certificates(lot: Lot):
    return Certificate.objects.select_related("lot", "issued_by", "replaces", "replaced_by").filter(lot=lot)


def certificate_version_param(raw: str | None) -> int | None:
    """The ``version`` query parameter: None when absent, else a positive whole number (400 naming it)."""
    if raw is None:
        return None
    if not (raw.isascii() and raw.isdigit()) or not 0 < int(raw) <= 1_000_000:
        raise InvalidInput.for_field("version", "must be a positive whole number")
    return int(raw)


def certificate_of_lot(lot_id: int, version: int | None = None) -> Certificate:
    """A released lot's certificate as issued: the current version, or the one asked for
    (a replaced version stays retrievable)."""
    lot = _lot(lot_id)
    certificates = _certificates(lot)
    certificate = (certificates.filter(version=version) if version else certificates.order_by("-version")).first()
    if certificate is None:
        if version and certificates.exists():
            raise NotFound(f"lot {lot_id} has no certificate version {version}")
        raise NotFound(f"lot {lot_id} has no certificate of analysis (it has not been released)")
    return certificate


def certificate_versions_of_lot(lot_id: int) -> list[Certificate]:
    """Every version of the lot's certificate, the newest first; empty before release."""
    return list(_certificates(_lot(lot_id)).order_by("-version"))
