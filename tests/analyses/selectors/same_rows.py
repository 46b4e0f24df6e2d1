"""Checks that hand-written SQL gives the rows, and the related rows kept on them, that the
queryset it stands for gives (analyses/selectors/rows.py)."""
from __future__ import annotations

from typing import Any

_MISSING = object()


def fields(obj) -> dict[str, tuple[Any, type]]:
    """Every column's value of ``obj``, with its type (a Decimal is not a float, a date not a str)."""
    return {f.attname: (getattr(obj, f.attname), type(getattr(obj, f.attname))) for f in type(obj)._meta.concrete_fields}


def assert_same_rows(ours, theirs, relations: dict[str, dict]) -> None:
    """``ours`` and ``theirs`` hold the same values, and keep the same related objects (the
    names in ``relations``, each with the relations kept on it in turn): None where the
    queryset keeps None, and the owner kept back on the related object where it keeps it."""
    assert type(ours) is type(theirs)
    assert fields(ours) == fields(theirs)
    assert (ours._state.adding, ours._state.db) == (theirs._state.adding, theirs._state.db) == (False, "default")
    for name, nested in relations.items():
        mine, its = ours._state.fields_cache.get(name, _MISSING), theirs._state.fields_cache.get(name, _MISSING)
        assert its is not _MISSING and mine is not _MISSING, name
        assert (mine is None) == (its is None), name
        if its is None:
            continue
        assert_same_rows(mine, its, nested)
        back = [key for key, value in its._state.fields_cache.items() if value is theirs]
        assert [key for key, value in mine._state.fields_cache.items() if value is ours] == back, name
