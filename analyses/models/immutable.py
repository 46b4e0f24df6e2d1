"""Guards for rows that must never change once written."""
from __future__ import annotations

from django.db import models


class ImmutableRowError(Exception):
    """Raised when code tries to update or delete a row that is append-only."""


class AppendOnlyQuerySet(models.QuerySet):
    """Bulk updates and deletes are refused; rows are only ever inserted."""

    def update(self, **kwargs):
        raise ImmutableRowError(f"{self.model.__name__} rows are append-only; update refused")

    def delete(self):
        raise ImmutableRowError(f"{self.model.__name__} rows are append-only; delete refused")

    # bulk_update goes through update(); _raw_delete is what Collector uses for fast deletes.
    def _raw_delete(self, using):
        raise ImmutableRowError(f"{self.model.__name__} rows are append-only; delete refused")

    _raw_delete.queryset_only = True


class AppendOnlyModel(models.Model):
    """A model whose rows can be inserted but never saved again or deleted."""

    objects = AppendOnlyQuerySet.as_manager()

    class Meta:
        abstract = True

    def save(self, *args, **kwargs):
        if not self._state.adding:
            raise ImmutableRowError(f"{type(self).__name__} #{self.pk} is append-only; update refused")
        kwargs["force_insert"] = True
        super().save(*args, **kwargs)

    def delete(self, *args, **kwargs):
        raise ImmutableRowError(f"{type(self).__name__} #{self.pk} is append-only; delete refused")
