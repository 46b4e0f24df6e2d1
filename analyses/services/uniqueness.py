"""Creates with a unique key, safe under concurrency.

A service checks first that the key is free, so a sequential duplicate is refused with
InvalidInput naming the field. Two requests that both pass that check at the same moment
meet again at the database's unique index: the second insert waits for the first
transaction and then fails with IntegrityError. ``UniqueKey.insert()`` turns that failure
into the very InvalidInput the check gives, and ``insert_or_fetch`` lets a caller that
would rather use the winner's row (an upsert) carry on with it.

Which key was violated is decided by asking the database again whether the key is now
taken, not by parsing constraint names, which differ between SQLite and PostgreSQL and
between ``unique=True`` fields and named constraints. On PostgreSQL (READ COMMITTED) the
failed insert returns only once the winner has committed, so its row is visible.
"""
from __future__ import annotations

from collections.abc import Callable, Iterator
from contextlib import contextmanager
from dataclasses import dataclass
from typing import Any, TypeVar

from django.db import IntegrityError, models, transaction

from analyses.errors import InvalidInput

ModelT = TypeVar("ModelT", bound=models.Model)


@dataclass(frozen=True)
class UniqueKey:
    """The value ``value`` of ``model``'s unique ``field``; errors name ``input_field``
    (default: ``field``) with ``message``."""

    model: type[models.Model]
    field: str
    value: Any
    message: str
    input_field: str | None = None

    def taken(self) -> bool:
        return self.model._default_manager.filter(**{self.field: self.value}).exists()

    def error(self) -> InvalidInput:
        return InvalidInput.for_field(self.input_field or self.field, self.message)

    def refuse_if_taken(self) -> None:
        """The sequential check: InvalidInput when a row already holds the key."""
        if self.taken():
            raise self.error()

    @contextmanager
    def insert(self) -> Iterator[None]:
        """Run the block in a transaction (a savepoint when already inside one); when it
        fails on a unique index and the key is now taken, raise ``error()`` instead of the
        IntegrityError. Anything else is raised unchanged."""
        try:
            with transaction.atomic():
                yield
        except IntegrityError:
            if self.taken():
                raise self.error() from None
            raise


def insert_or_fetch(
    model: type[ModelT], lookup: dict[str, Any], create: Callable[[], ModelT], *, lock: bool = False
) -> tuple[ModelT, bool]:
    """``create()`` in a savepoint, and True; when that loses a race on the unique key
    ``lookup``, the row that won (locked with ``lock``, which needs a transaction) and False."""
    try:
        with transaction.atomic():
            return create(), True
    except IntegrityError:
        queryset = model._default_manager.select_for_update() if lock else model._default_manager.all()
        row = queryset.filter(**lookup).first()
        if row is None:
            raise
        return row, False
