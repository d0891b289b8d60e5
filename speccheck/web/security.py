"""Safe by default: an access token off this computer, CSRF tokens, bounded request bodies.

Pure ASGI middleware (no framework import), so each piece can be read on its own.
"""

from __future__ import annotations

import hashlib
import hmac
import secrets
from collections.abc import Awaitable, Callable, MutableMapping
from typing import Any
from urllib.parse import parse_qs, urlencode

__all__ = ["AccessToken", "BodyLimit", "SecurityHeaders", "csrf_ok", "ACCESS_COOKIE"]

Scope = MutableMapping[str, Any]
Message = MutableMapping[str, Any]
Receive = Callable[[], Awaitable[Message]]
Send = Callable[[Message], Awaitable[None]]
ASGIApp = Callable[[Scope, Receive, Send], Awaitable[None]]

ACCESS_COOKIE = "speccheck_access"
CSP = (
    "default-src 'self'; img-src 'self' data:; script-src 'self'; style-src 'self'; "
    "object-src 'none'; base-uri 'none'; form-action 'self'; frame-ancestors 'none'"
)


def csrf_ok(expected: str | None, given: str | None) -> bool:
    """True when ``given`` is the session's CSRF token (compared in constant time)."""
    return bool(expected) and bool(given) and hmac.compare_digest(str(expected), str(given))


async def _plain(send: Send, status: int, text: str, headers: list | None = None) -> None:
    body = (text + "\n").encode("utf-8")
    await send(
        {
            "type": "http.response.start",
            "status": status,
            "headers": [
                (b"content-type", b"text/plain; charset=utf-8"),
                (b"content-length", str(len(body)).encode()),
                *(headers or []),
            ],
        }
    )
    await send({"type": "http.response.body", "body": body})


def _header(scope: Scope, name: bytes) -> str | None:
    for k, v in scope.get("headers") or []:
        if k.lower() == name:
            return v.decode("latin-1")
    return None


class AccessToken:
    """Every request must show the access token: ``Authorization: Bearer TOKEN``, the cookie
    set after one visit to ``/?token=TOKEN``, or nothing when no token is configured."""

    def __init__(self, app: ASGIApp, token: str | None):
        self.app = app
        self.token = token
        # the cookie holds a digest, not the token itself
        self.cookie = (
            hashlib.sha256(b"speccheck-access:" + token.encode()).hexdigest() if token else ""
        )

    def _cookie_ok(self, scope: Scope) -> bool:
        raw = _header(scope, b"cookie") or ""
        for part in raw.split(";"):
            k, _, v = part.strip().partition("=")
            if k == ACCESS_COOKIE and hmac.compare_digest(v, self.cookie):
                return True
        return False

    async def __call__(self, scope: Scope, receive: Receive, send: Send) -> None:
        if scope["type"] != "http" or not self.token:
            return await self.app(scope, receive, send)
        auth = _header(scope, b"authorization") or ""
        if auth.startswith("Bearer ") and hmac.compare_digest(auth[7:].strip(), self.token):
            return await self.app(scope, receive, send)
        if self._cookie_ok(scope):
            return await self.app(scope, receive, send)
        query = parse_qs(scope.get("query_string", b"").decode("latin-1"))
        given = (query.pop("token", [""]) or [""])[0]
        if scope["method"] == "GET" and given and hmac.compare_digest(given, self.token):
            rest = urlencode(query, doseq=True)
            where = scope.get("path", "/") + (f"?{rest}" if rest else "")
            cookie = f"{ACCESS_COOKIE}={self.cookie}; HttpOnly; SameSite=Strict; Path=/"
            return await _plain(
                send,
                303,
                "access granted",
                [(b"location", where.encode()), (b"set-cookie", cookie.encode())],
            )
        await _plain(
            send,
            401,
            "speccheck bench: access token required (open the address given at the server's "
            "start, with ?token=...)",
        )


class BodyLimit:
    """A request body larger than ``limit`` bytes is refused (413) before it is read; a
    state-changing request without Content-Length is refused (411)."""

    def __init__(self, app: ASGIApp, limit: int):
        self.app = app
        self.limit = limit

    async def __call__(self, scope: Scope, receive: Receive, send: Send) -> None:
        if scope["type"] != "http" or scope["method"] in ("GET", "HEAD", "OPTIONS"):
            return await self.app(scope, receive, send)
        length = _header(scope, b"content-length")
        if length is None or not length.strip().isdigit():
            return await _plain(send, 411, "refused: the request does not state its length")
        if int(length) > self.limit:
            mib = self.limit / 2**20
            return await _plain(send, 413, f"refused: larger than the {mib:.0f} MiB allowed")
        seen = 0

        async def bounded() -> Message:
            nonlocal seen
            msg = await receive()
            if msg.get("type") == "http.request":
                seen += len(msg.get("body", b""))
                if seen > int(length):  # more than declared: cut it off here
                    return {"type": "http.disconnect"}
            return msg

        await self.app(scope, bounded, send)


class SecurityHeaders:
    """No framing, no foreign scripts, no sniffing, no caching of pages that hold results."""

    def __init__(self, app: ASGIApp):
        self.app = app

    async def __call__(self, scope: Scope, receive: Receive, send: Send) -> None:
        if scope["type"] != "http":
            return await self.app(scope, receive, send)

        async def with_headers(msg: Message) -> None:
            if msg["type"] == "http.response.start":
                headers = list(msg.get("headers") or [])
                names = {k.lower() for k, _ in headers}
                extra = [
                    (b"content-security-policy", CSP.encode()),
                    (b"x-content-type-options", b"nosniff"),
                    (b"referrer-policy", b"no-referrer"),
                    (b"x-frame-options", b"DENY"),
                ]
                if b"cache-control" not in names:
                    extra.append((b"cache-control", b"no-store"))
                msg["headers"] = headers + extra
            await send(msg)

        await self.app(scope, receive, with_headers)


def new_token() -> str:
    """A random access token for ``speccheck serve`` to suggest."""
    return secrets.token_urlsafe(24)
