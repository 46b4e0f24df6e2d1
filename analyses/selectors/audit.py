"""Reading the audit trail (QA, lab managers, admins)."""
from __future__ import annotations

from django.db import models
from django.db.models import Q, QuerySet

from analyses.models import AuditEntry, Lot, Sample
from analyses.services.access import require_permission


def audit_trail_for(user, obj: models.Model) -> QuerySet[AuditEntry]:
    """Every entry about ``obj`` in order. For a lot: the lot and everything on it (its
    samples, tests, results, investigations, certificate); for a sample: the sample and its
    tests and results; for anything else: the object's own entries. Needs
    ``view_audit_trail``."""
    require_permission(user, "view_audit_trail", "read the audit trail")
    if isinstance(obj, Lot):
        condition = Q(lot_ref=obj.pk) | Q(object_type="analyses.lot", object_id=str(obj.pk))
    elif isinstance(obj, Sample):
        condition = Q(sample_ref=obj.pk) | Q(object_type="analyses.sample", object_id=str(obj.pk))
    else:
        condition = Q(object_type=obj._meta.label_lower, object_id=str(obj.pk))
    return AuditEntry.objects.filter(condition).select_related("actor").order_by("sequence")
