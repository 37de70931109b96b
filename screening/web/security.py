"""The loopback server's defences, as one ASGI middleware.

* ``Host`` must name this server (a DNS-rebinding page reaches it under a foreign name): refused 421.
* A POST carrying an ``Origin`` must come from this server's own pages: refused 403. (Browsers send
  ``Origin`` on every POST; a request without it comes from a program, not from another web site.)
* Request bodies above the route's limit are refused with a page saying the limit (413), whether
  the size is announced or only found while reading.
* Every answer carries a Content-Security-Policy that lets a page load only from this server, and
  tells the browser not to guess types, frame the page or send referrers to other sites.
"""

from __future__ import annotations

from urllib.parse import urlsplit

from starlette.responses import HTMLResponse

CSP = ("default-src 'self'; script-src 'self'; style-src 'self'; img-src 'self'; connect-src 'self'; "
       "font-src 'self'; form-action 'self'; frame-ancestors 'none'; base-uri 'none'; object-src 'none'")
#: For SVG plots opened on their own: matplotlib writes its styles inline; nothing else may load.
CSP_SVG = "default-src 'none'; style-src 'unsafe-inline'; frame-ancestors 'self'"
HEADERS = [
    (b"x-content-type-options", b"nosniff"),
    (b"referrer-policy", b"same-origin"),
    (b"x-frame-options", b"DENY"),
    (b"cross-origin-opener-policy", b"same-origin"),
    (b"cross-origin-resource-policy", b"same-origin"),
]
LOOPBACK_NAMES = ("127.0.0.1", "localhost", "[::1]")


class TooLarge(Exception):
    """A request body went over its limit while being read."""

    def __init__(self, limit: int) -> None:
        super().__init__(limit)
        self.limit = limit


def _page(status: int, title: str, text: str) -> HTMLResponse:
    from html import escape

    body = (f"<!doctype html><html lang=\"en\"><head><meta charset=\"utf-8\"><title>{escape(title)}</title>"
            f"<link rel=\"stylesheet\" href=\"/static/web.css\"></head><body><main><h1>{escape(title)}</h1>"
            f"<p role=\"alert\">{escape(text)}</p><p><a href=\"/\">Back to the vessel page</a></p></main></body></html>")
    return HTMLResponse(body, status_code=status)


def too_large_page(limit: int) -> HTMLResponse:
    return _page(413, "File too large", f"The upload is larger than the {megabytes(limit)} this page accepts. "
                 "Split it into smaller files and send them one by one.")


def megabytes(n: int) -> str:
    return f"{n / 1e6:.1f} MB" if n < 10e6 else f"{n / 1e6:.0f} MB"


class Guard:
    """ASGI middleware: Host and Origin checks, body size limits, security headers.

    `hosts`: the host names (with the port where it is not the scheme's default) the server answers
    to; `limits`: path prefix -> largest body in bytes, the longest matching prefix applies, `default`
    elsewhere."""

    def __init__(self, app, hosts: set[str], limits: dict[str, int], default: int) -> None:
        self.app = app
        self.hosts = {h.lower() for h in hosts}
        self.limits = sorted(limits.items(), key=lambda kv: -len(kv[0]))
        self.default = default

    def limit_for(self, path: str) -> int:
        for prefix, n in self.limits:
            if path.startswith(prefix):
                return n
        return self.default

    def allowed_origin(self, origin: str) -> bool:
        parts = urlsplit(origin)
        return parts.scheme in ("http", "https") and parts.netloc.lower() in self.hosts

    async def __call__(self, scope, receive, send):
        if scope["type"] != "http":
            return await self.app(scope, receive, send)
        headers = {k.decode("latin-1").lower(): v.decode("latin-1") for k, v in scope["headers"]}

        async def send_with_headers(message):
            if message["type"] == "http.response.start":
                extra = list(HEADERS)
                have = {k.lower() for k, _ in message.get("headers", [])}
                if b"content-security-policy" not in have:
                    extra.append((b"content-security-policy", CSP.encode()))
                message = dict(message, headers=list(message.get("headers", [])) + extra)
            await send(message)

        host = headers.get("host", "").lower()
        if host not in self.hosts:
            return await _page(421, "Wrong address",
                               f"This screening server answers only at its own address ({sorted(self.hosts)[0]}); "
                               "the request named another host.")(scope, receive, send_with_headers)
        if scope["method"] not in ("GET", "HEAD", "POST"):
            return await _page(405, "Not allowed", "Only pages and forms are served here.")(
                scope, receive, send_with_headers)
        if scope["method"] == "POST":
            origin = headers.get("origin")
            if origin is not None and not self.allowed_origin(origin):
                return await _page(403, "Refused", "A form from another web site was sent to this server; "
                                   "it was refused.")(scope, receive, send_with_headers)
            limit = self.limit_for(scope["path"])
            length = headers.get("content-length")
            too_large = too_large_page(limit)
            if length is not None and length.isdigit() and int(length) > limit:
                return await too_large(scope, receive, send_with_headers)
            seen = 0

            async def counted():
                nonlocal seen
                message = await receive()
                if message["type"] == "http.request":
                    seen += len(message.get("body", b""))
                    if seen > limit:
                        raise TooLarge(limit)
                return message

            # a body found too large while reading raises TooLarge inside the route, which answers with
            # too_large_page() (the route knows it is reading a form)
            return await self.app(scope, counted, send_with_headers)
        return await self.app(scope, receive, send_with_headers)
