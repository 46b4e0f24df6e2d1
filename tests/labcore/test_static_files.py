"""WhiteNoise serves the API docs' own scripts with DEBUG off: no --insecure, no web server."""
from __future__ import annotations

import re

import pytest


@pytest.mark.django_db
def test_the_docs_page_and_the_scripts_it_names_are_served(admin_client, settings):
    assert settings.DEBUG is False
    page = admin_client.get("/api/docs/")
    assert page.status_code == 200
    scripts = re.findall(r'src="(/static/[^"]+\.js)"', page.content.decode())
    assert scripts, "the docs page names no local script"
    for src in scripts:
        response = admin_client.get(src)
        assert response.status_code == 200, src
        assert b"".join(response.streaming_content)  # the file itself, not an empty answer
