"""Reads the lot endpoints need beyond ``lists`` and ``certificates``."""
from __future__ import annotations

from analyses.errors import NotFound
from analyses.models import Certificate, Lot


def certificate_of_lot(lot_id: int) -> Certificate:
    """The stored certificate of a released lot, with the rows its representation names."""
    certificate = Certificate.objects.select_related("lot", "issued_by").filter(lot_id=lot_id).first()
    if certificate is None:
        if not Lot.objects.filter(pk=lot_id).exists():
            raise NotFound(f"lot {lot_id} not found")
        raise NotFound(f"lot {lot_id} has no certificate of analysis (it has not been released)")
    return certificate
