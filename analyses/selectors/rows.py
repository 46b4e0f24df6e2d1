"""Rows of hand-written SQL made into model objects as Django makes the rows it reads.

Hand-written SQL serves a few reads on a hot path (result entry, issue 12), where Django's
compiling of a queryset with its joins took longer than PostgreSQL took to answer it. Each such
read keeps its queryset for the other databases, and a test holds the two equal.
"""
from __future__ import annotations

from typing import Any

from django.db.models import Model
from django.db.transaction import TransactionManagementError
from django.db.models.fields.related_descriptors import ForwardManyToOneDescriptor, ReverseOneToOneDescriptor


class RowReader:
    """One model's columns in a row of hand-written SQL, made into an object as Django makes a
    row it reads (``Model.from_db``, each value through the converters its field's column
    takes), or None where the row's id is null (a left join that found nothing)."""

    def __init__(self, model: type[Model], connection: Any):
        self.model, self.connection, self.alias = model, connection, connection.alias
        self.fields = model._meta.concrete_fields
        self.attnames = [field.attname for field in self.fields]
        self.pk_index = self.fields.index(model._meta.pk)
        self.converters = []
        for index, field in enumerate(self.fields):
            column = field.get_col(model._meta.db_table)
            found = connection.ops.get_db_converters(column) + column.get_db_converters(connection)
            if found:
                self.converters.append((index, column, found))

    @classmethod
    def of(cls, model: type[Model], connection: Any) -> "RowReader":
        """The reader of ``model``'s rows on ``connection``, made once: looking up every
        column's converters was a sixteenth of a request that enters two results (issue 12).
        Kept on the connection's own wrapper (one per thread), so that it goes with it: a cache
        of this module's would keep the wrapper of a thread that ended, and its connection, alive
        (found by a review)."""
        readers = connection.__dict__.setdefault(_READERS, {})
        reader = readers.get(model)
        if reader is None:
            reader = readers[model] = cls(model, connection)
        return reader

    @staticmethod
    def select_list(model: type[Model], table: str) -> str:
        return ", ".join(f'{table}."{field.column}"' for field in model._meta.concrete_fields)

    def read(self, row: tuple[Any, ...], start: int) -> tuple[Model | None, int]:
        end = start + len(self.fields)
        values = list(row[start:end])
        if values[self.pk_index] is None:
            return None, end
        for index, column, converters in self.converters:
            for convert in converters:
                values[index] = convert(values[index], column, self.connection)
        return self.model.from_db(self.alias, self.attnames, values), end


_READERS = "_oleotrace_row_readers"  # the attribute of a connection's wrapper that keeps its readers


def lock_needs_transaction(connection: Any) -> None:
    """Refuse a locking read in autocommit, as Django refuses ``select_for_update`` there: the
    lock would end with the statement."""
    if connection.get_autocommit():
        raise TransactionManagementError("select_for_update cannot be used outside of a transaction.")


def select_list(*models_and_aliases: tuple[type[Model], str]) -> str:
    """The columns of each model under its table alias, in ``RowReader`` order."""
    return ", ".join(RowReader.select_list(model, alias) for model, alias in models_and_aliases)


def relation_keep(obj: Model, accessor: str, related: Model | None) -> None:
    """Keep ``related`` on ``obj`` as ``select_related(accessor)`` keeps it (Django's
    ``RelatedPopulator``): under a foreign key, ``obj`` kept on ``related`` too for a one-to-one;
    under the reverse side of a one-to-one, ``obj`` kept on ``related`` too. None (a left join
    that found nothing) is kept as well, so that reading it reads nothing more."""
    descriptor = getattr(type(obj), accessor)
    if isinstance(descriptor, ForwardManyToOneDescriptor):
        field = descriptor.field
        field.set_cached_value(obj, related)
        if related is not None and field.unique:
            field.remote_field.set_cached_value(related, obj)
    elif isinstance(descriptor, ReverseOneToOneDescriptor):
        descriptor.related.set_cached_value(obj, related)
        if related is not None:
            descriptor.related.field.set_cached_value(related, obj)
    else:
        raise ValueError(f"{type(obj).__name__}.{accessor} is neither a foreign key nor the reverse side of a one-to-one")
