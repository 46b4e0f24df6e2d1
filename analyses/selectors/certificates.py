"""Reading certificates of analysis."""
from __future__ import annotations

from typing import Any

from analyses.errors import NotFound
from analyses.models import Certificate, Lot


def certificate_for(lot: Lot | int) -> dict[str, Any]:
    """The current certificate of a released lot (its latest version), with its number, hash and issue details."""
    lot_id = lot.pk if isinstance(lot, Lot) else lot
    certificate = (
        Certificate.objects.select_related("issued_by", "lot", "replaces").filter(lot_id=lot_id).order_by("-version").first()
    )
    if certificate is None:
        raise NotFound(f"lot {lot_id} has no certificate of analysis (it has not been released)")
    return {
        "number": certificate.number,
        "version": certificate.version,
        "replaces": certificate.replaces.number if certificate.replaces_id else None,
        "lot": certificate.lot.code,
        "issued_by": certificate.issued_by.username,
        "issued_at": certificate.issued_at,
        "content_sha256": certificate.content_sha256,
        "content": certificate.content,
    }
