"""The API root points to every top-level resource, each of which answers."""


def test_the_api_root_lists_resources_that_exist(client, admin_user):
    listed = client.get("/api/").json()
    assert {"methods", "lots", "samples", "tests", "users", "tokens", "stability_studies", "alerts", "trend_series", "docs"} <= set(listed)
    client.force_login(admin_user)
    for name, url in listed.items():
        expected = 405 if name == "calculations" else 200  # calculations take POST only
        assert client.get(url).status_code == expected, name
