"""What keeps the review site a local, read-only viewer.

* Host check: Flask's ``TRUSTED_HOSTS`` answers 400 to any request whose Host header
  is not one of the names the site was started for, so a web page elsewhere cannot
  reach it through a domain name pointed at 127.0.0.1 (DNS rebinding).
* Response headers: a Content-Security-Policy that allows only the site's own script
  and style sheet and inline ``data:`` images (the charts), no framing, no form posts
  elsewhere; no caching (the pages hold document text); no MIME sniffing; no Referer.
* Only GET and HEAD: nothing on the site changes anything.
"""

from __future__ import annotations

import ipaddress

from flask import Flask, Response

LOOPBACK_NAMES = ("127.0.0.1", "localhost", "::1", "[::1]")
CONTENT_SECURITY_POLICY = (
    "default-src 'none'; script-src 'self'; style-src 'self'; img-src 'self' data:; "
    "form-action 'self'; frame-ancestors 'none'; base-uri 'none'"
)
_HEADERS = {
    "Content-Security-Policy": CONTENT_SECURITY_POLICY,
    "X-Content-Type-Options": "nosniff",
    "X-Frame-Options": "DENY",
    "Referrer-Policy": "no-referrer",
    "Cache-Control": "no-store",
    "Cross-Origin-Opener-Policy": "same-origin",
    "Cross-Origin-Resource-Policy": "same-origin",
}


def is_loopback(host: str) -> bool:
    if host == "localhost":
        return True
    try:
        return ipaddress.ip_address(host.strip("[]")).is_loopback
    except ValueError:
        return False


def trusted_hosts(bind_host: str, extra: tuple[str, ...] = ()) -> list[str]:
    """Host header names the site answers to: loopback names, the address it is bound
    to (unless a wildcard) and any names given."""
    names = list(LOOPBACK_NAMES)
    if bind_host not in ("0.0.0.0", "::", ""):
        names.append(bind_host)
    return names + [name for name in extra if name not in names]


def secure(app: Flask, hosts: list[str]) -> None:
    app.config["TRUSTED_HOSTS"] = hosts

    @app.after_request
    def add_headers(response: Response) -> Response:
        for name, value in _HEADERS.items():
            response.headers[name] = value
        return response
