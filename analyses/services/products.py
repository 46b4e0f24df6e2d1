"""Creating oil products (grades)."""
from __future__ import annotations

from django.utils import timezone

from analyses.audit import audit_append, created
from analyses.models import AuditAction, Product
from analyses.services.access import Actor, require_permission, required_text
from analyses.services.uniqueness import UniqueKey

PRODUCT_FIELDS = ("code", "name", "oil_type", "description")


def product_create(actor: Actor, *, code: str, name: str, oil_type: str = "", description: str = "") -> Product:
    """Create a product. Needs ``add_product`` (lab manager, admin). The code must be unused."""
    require_permission(actor, "add_product", "create products")
    code = required_text(code, "code")
    name = required_text(name, "name")
    key = UniqueKey(Product, "code", code, f"product {code!r} already exists")
    key.refuse_if_taken()
    with key.insert():  # a concurrent create of the same code gets the same answer
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
