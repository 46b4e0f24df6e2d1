"""The certificate of analysis as an HTML page, from ``certificate_layout`` (Django's template
engine, which escapes every value)."""
from __future__ import annotations

from typing import Any

from django.template.loader import render_to_string

from analyses.documents.certificate_layout import certificate_layout


def certificate_html(content: dict[str, Any], *, replaced_by: str | None = None) -> str:
    return render_to_string("analyses/certificate.html", {"layout": certificate_layout(content, replaced_by=replaced_by)})
