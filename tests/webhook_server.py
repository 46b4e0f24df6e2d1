"""A tiny HTTP server on 127.0.0.1 that answers alert webhooks with a scripted status."""
from __future__ import annotations

import json
import threading
from http.server import BaseHTTPRequestHandler, ThreadingHTTPServer


class WebhookServer:
    """Answers POSTs with the next status of ``statuses`` (the last repeats) and keeps the bodies."""

    def __init__(self, statuses: list[int]):
        self.statuses = list(statuses)
        self.received: list[dict] = []
        server = self

        class Handler(BaseHTTPRequestHandler):
            def do_POST(self):
                body = self.rfile.read(int(self.headers.get("Content-Length", 0)))
                server.received.append(json.loads(body))
                status = server.statuses.pop(0) if len(server.statuses) > 1 else server.statuses[0]
                self.send_response(status)
                if 300 <= status < 400:
                    self.send_header("Location", "/final")
                self.end_headers()

            def do_GET(self):  # a followed redirect would arrive here, without the alert
                server.received.append({"followed_redirect_to": self.path})
                self.send_response(200)
                self.end_headers()

            def log_message(self, *args):  # keep test output quiet
                pass

        self.httpd = ThreadingHTTPServer(("127.0.0.1", 0), Handler)
        self.url = f"http://127.0.0.1:{self.httpd.server_address[1]}/hook"
        self.thread = threading.Thread(target=self.httpd.serve_forever, daemon=True)

    def __enter__(self) -> WebhookServer:
        self.thread.start()
        return self

    def __exit__(self, *exc) -> None:
        self.httpd.shutdown()
        self.httpd.server_close()
