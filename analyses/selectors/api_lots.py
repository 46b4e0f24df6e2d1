"""Reads the lot endpoints need beyond ``lists`` and ``certificates``."""
from __future__ import annotations

from analyses.errors import NotFound
from analyses.models import Certificate, Lot


def certificate_of_lot(lot_id: int) -> Certificate:
    """The stored certificate of a released lot, with the rows its representation names."""
    # the lot first: a lookup by pk names no row for an id beyond the database's integers,
    # where one through the foreign key would overflow on SQLite
    lot = Lot.objects.filter(pk=lot_id).first()
    if lot is None:
        raise NotFound(f"lot {lot_id} not found")
    certificate = Certificate.objects.select_related("lot", "issued_by").filter(lot=lot).first()
    if certificate is None:
        raise NotFound(f"lot {lot_id} has no certificate of analysis (it has not been released)")
    return certificate
