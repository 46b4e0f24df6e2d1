"""Domain errors that services raise; the API maps each to one HTTP status."""
from __future__ import annotations


class DomainError(Exception):
    status_code = 400

    def __init__(self, detail: str, fields: dict[str, list[str]] | None = None):
        self.detail = detail
        self.fields = fields or {}
        super().__init__(detail)


class InvalidInput(DomainError):
    """Input that cannot be right; ``fields`` maps each offending field to its reasons."""

    status_code = 400

    @classmethod
    def for_field(cls, field: str, reason: str) -> InvalidInput:
        return cls(f"{field}: {reason}", {field: [reason]})


class NotAllowed(DomainError):
    """The user's role does not permit the action."""

    status_code = 403


class NotFound(DomainError):
    status_code = 404


class Conflict(DomainError):
    """The action is not possible in the object's present state (illegal transition, open OOS...)."""

    status_code = 409

    def __init__(self, detail: str, missing: list[str] | None = None):
        super().__init__(detail)
        self.missing = missing or []
