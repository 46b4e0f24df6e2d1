"""Read access to the registered method plugins."""
from __future__ import annotations

from typing import Any

from analyses.errors import NotFound
from plugins.registry import UnknownMethod, get_registry


def method_list() -> list[dict[str, Any]]:
    return [plugin.describe() for plugin in get_registry().all()]


def method_detail(code: str) -> dict[str, Any]:
    try:
        return get_registry().get(code).describe()
    except UnknownMethod as exc:
        raise NotFound(str(exc)) from None
