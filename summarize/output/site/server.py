"""Serving the review site: werkzeug's threaded WSGI server on 127.0.0.1 unless told
otherwise. It serves until interrupted and opens nothing else (no browser)."""

from __future__ import annotations

from collections.abc import Callable
from pathlib import Path

from werkzeug.serving import make_server

from summarize.output.site.app import create_app
from summarize.output.site.security import is_loopback, trusted_hosts


class ReviewServer:
    """The site for ``db_path`` bound to ``host``:``port`` (port 0: a free one)."""

    def __init__(self, db_path: str | Path, host: str = "127.0.0.1", port: int = 0, allowed_hosts: tuple[str, ...] = ()):
        self.db_path = db_path
        self.host = host
        self.port = port
        self.allowed_hosts = allowed_hosts

    def start(self):
        """Bind and return the server (``serve_forever`` runs it; ``shutdown`` stops it)."""
        app = create_app(self.db_path, hosts=trusted_hosts(self.host, self.allowed_hosts))
        return make_server(self.host, self.port, app, threaded=True)

    def address(self, server) -> str:
        host = self.host if is_loopback(self.host) or self.host not in ("0.0.0.0", "::") else "127.0.0.1"
        shown = f"[{host}]" if ":" in host else host
        return f"http://{shown}:{server.server_port}/"

    def serve(self, say: Callable[[str], None]) -> None:
        server = self.start()
        if not is_loopback(self.host):
            say(f"warning: listening on {self.host}: other machines can reach the site and read the store's "
                f"documents; it answers only to the names {', '.join(trusted_hosts(self.host, self.allowed_hosts))} "
                "(add others with --allow-host)")
        say(f"review site for {self.db_path}: {self.address(server)}  (Ctrl-C stops it)")
        try:
            server.serve_forever()
        finally:
            server.server_close()
