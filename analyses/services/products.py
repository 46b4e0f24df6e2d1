"""Creating oil products (grades)."""
from __future__ import annotations

from django.db import transaction
from django.utils import timezone

from analyses.audit import audit_append, created
from analyses.errors import InvalidInput
from analyses.models import AuditAction, Product
from analyses.services.access import Actor, require_permission, required_text

PRODUCT_FIELDS = ("code", "name", "oil_type", "description")


def product_create(actor: Actor, *, code: str, name: str, oil_type: str = "", description: str = "") -> Product:
    """Create a product. Needs ``add_product`` (lab manager, admin). The code must be unused."""
    require_permission(actor, "add_product", "create products")
    code = required_text(code, "code")
    name = required_text(name, "name")
    if Product.objects.filter(code=code).exists():
        raise InvalidInput.for_field("code", f"product {code!r} already exists")
    with transaction.atomic():
        product = Product.objects.create(
            code=code,
            name=name,
            oil_type=(oil_type or "").strip(),
            description=(description or "").strip(),
            created_by=actor,
            created_at=timezone.now(),
        )
        audit_append(actor, AuditAction.CREATE, product, created(product, PRODUCT_FIELDS))
    return product
