"""Paths the URLconf does not know still answer the API's JSON error format."""


def test_unknown_api_paths_are_json_404(client, db):
    for path in ("/api/lots/abc/", "/api/no-such-thing/", "/api/stability-studies/x/plot.gif"):
        response = client.get(path)
        assert response.status_code == 404
        assert response.json() == {"detail": "Not found."}


def test_other_paths_keep_the_html_404(client, db):
    response = client.get("/no-such-page/")
    assert response.status_code == 404
    assert response["Content-Type"].startswith("text/html")
