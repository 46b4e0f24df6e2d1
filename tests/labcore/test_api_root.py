"""The API root points to every top-level resource, each of which answers."""
from django.urls import URLPattern, URLResolver, get_resolver, reverse

# Top-level routes that take POST only: the root links the readable ones.
POST_ONLY = {"calculation", "auth-token", "test-assign", "result-record", "result-record-bulk"}


def _top_level_api_routes() -> set[str]:
    """Names of the URLconf's /api/ routes that name no object (no path parameter)."""
    names = set()
    for entry in get_resolver().url_patterns:
        if not (isinstance(entry, URLResolver) and str(entry.pattern) == "api/"):
            continue
        for pattern in entry.url_patterns:
            if isinstance(pattern, URLPattern) and pattern.name and "<" not in str(pattern.pattern) and "(?P" not in str(pattern.pattern):
                names.add(pattern.name)
    return names


def test_the_api_root_lists_resources_that_exist(client, admin_user):
    listed = client.get("/api/").json()
    assert {"methods", "lots", "samples", "tests", "users", "tokens", "stability_studies", "alerts", "trend_series", "docs"} <= set(listed)
    client.force_login(admin_user)
    for name, url in listed.items():
        expected = 405 if name == "calculations" else 200  # calculations take POST only
        assert client.get(url).status_code == expected, name


def test_the_api_root_links_every_readable_top_level_route(client):
    # issue 13: products, specifications, investigations, turnaround and "me" were missing
    linked = set(client.get("/api/").json().values())
    missing = sorted(name for name in _top_level_api_routes() - POST_ONLY if "http://testserver" + reverse(name) not in linked)
    assert missing == []
    assert {"products", "specifications", "investigations", "turnaround", "me"} <= set(client.get("/api/").json())
