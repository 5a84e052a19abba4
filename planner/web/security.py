"""What keeps the planning desk's health data on the machine: access token, form tokens, upload limits.

- **Access token.** Bound to a loopback address, the server answers only this machine. Bound to any other
  address it needs ``PHASEPLAN_SERVE_TOKEN`` and every request must carry it: an ``Authorization: Bearer``
  header (scripts), or the ``phaseplan_token`` cookie that opening any page once with ``?token=...`` sets
  (browsers). Without it: 401 and one line saying so.
- **Form tokens (CSRF).** Every page sets a random session cookie (``SameSite=Strict``, ``HttpOnly``); every
  form carries a token derived from it with a per-server secret (HMAC-SHA256), checked before anything is
  read from the form. ``POST /api/plan`` takes ``application/toml`` only, which a page on another site
  cannot send without a CORS preflight (which this server never grants).
- **Upload limit.** A request body over the limit is refused (413) from its ``Content-Length`` before it is
  read; a POST without one is refused (411), so no body is ever read unbounded.
"""

from __future__ import annotations

import hashlib
import hmac
import ipaddress
import secrets
from urllib.parse import parse_qsl, urlencode

from starlette.datastructures import MutableHeaders
from starlette.responses import PlainTextResponse, RedirectResponse
from starlette.types import ASGIApp, Receive, Scope, Send

from planner.errors import InputError

#: Environment variable holding the access token for a non-loopback bind.
TOKEN_VARIABLE = "PHASEPLAN_SERVE_TOKEN"
TOKEN_COOKIE = "phaseplan_token"
SESSION_COOKIE = "phaseplan_session"
#: Default largest request body [bytes]: a roster spreadsheet of a large site stays well under it.
DEFAULT_UPLOAD_LIMIT = 2 * 1024 * 1024
#: Shortest access token accepted [characters] (a design choice: guessing must be hopeless).
MIN_TOKEN_LENGTH = 16


def is_loopback(host: str) -> bool:
    """True for 127.0.0.0/8, ::1 and ``localhost``."""
    if host == "localhost":
        return True
    try:
        return ipaddress.ip_address(host.strip("[]")).is_loopback
    except ValueError:
        return False


def required_token(host: str, token: str | None) -> str | None:
    """The token requests must carry on ``host``: None on loopback; InputError when a non-loopback bind lacks one."""
    if is_loopback(host):
        return token or None
    if not token:
        raise InputError(f"binding to {host} (not this machine only) needs an access token: set {TOKEN_VARIABLE} "
                         f"to a random string of at least {MIN_TOKEN_LENGTH} characters", field="--host")
    if len(token) < MIN_TOKEN_LENGTH:
        raise InputError(f"{TOKEN_VARIABLE} is {len(token)} characters long; use at least {MIN_TOKEN_LENGTH}",
                         field=TOKEN_VARIABLE)
    return token


class FormTokens:
    """CSRF tokens bound to a session cookie by a per-server secret."""

    def __init__(self, secret: bytes | None = None):
        self._secret = secret or secrets.token_bytes(32)

    @staticmethod
    def new_session() -> str:
        return secrets.token_urlsafe(24)

    def token(self, session: str) -> str:
        return hmac.new(self._secret, session.encode(), hashlib.sha256).hexdigest()

    def valid(self, session: str | None, token: str | None) -> bool:
        if not session or not token:
            return False
        return hmac.compare_digest(self.token(session), str(token))


def _cookies(scope: Scope) -> dict[str, str]:
    found = {}
    for name, value in scope.get("headers", []):
        if name == b"cookie":
            for part in value.decode("latin-1").split(";"):
                key, _, item = part.strip().partition("=")
                found[key] = item
    return found


class Guard:
    """ASGI middleware: the access token (when one is required) and the request-size limit."""

    def __init__(self, app: ASGIApp, token: str | None, upload_limit: int = DEFAULT_UPLOAD_LIMIT):
        self.app = app
        self.token = token
        self.upload_limit = upload_limit

    def _authorised(self, scope: Scope) -> bool:
        headers = dict(scope.get("headers", []))
        offered = []
        authorization = headers.get(b"authorization", b"").decode("latin-1")
        if authorization.lower().startswith("bearer "):
            offered.append(authorization[7:].strip())
        offered.append(_cookies(scope).get(TOKEN_COOKIE, ""))
        return any(hmac.compare_digest(item.encode(), self.token.encode()) for item in offered if item)

    async def __call__(self, scope: Scope, receive: Receive, send: Send) -> None:
        if scope["type"] != "http":
            await self.app(scope, receive, send)
            return
        if self.token is not None and not self._authorised(scope):
            query = dict(parse_qsl(scope.get("query_string", b"").decode("latin-1")))
            offered = query.pop("token", "")
            if offered and hmac.compare_digest(offered.encode(), self.token.encode()):
                # a browser opening the link with ?token=...: keep it in a cookie, drop it from the address
                target = scope["path"] + ("?" + urlencode(query) if query else "")
                response = RedirectResponse(target, status_code=303)
                response.set_cookie(TOKEN_COOKIE, offered, httponly=True, samesite="strict")
                await response(scope, receive, send)
                return
            response = PlainTextResponse(
                "phaseplan: this server needs its access token: send 'Authorization: Bearer TOKEN' or open the "
                "address once with ?token=TOKEN (the token is the server's PHASEPLAN_SERVE_TOKEN)", status_code=401,
                headers={"WWW-Authenticate": "Bearer"})
            await response(scope, receive, send)
            return
        if scope["method"] in ("POST", "PUT", "PATCH"):
            length = dict(scope.get("headers", [])).get(b"content-length")
            problem = None
            if length is None:
                problem = (411, "phaseplan: the request must say its length (Content-Length)")
            elif not length.isdigit() or int(length) > self.upload_limit:
                problem = (413, f"phaseplan: upload too large: {length.decode('latin-1')} bytes; the limit is "
                                f"{self.upload_limit:,} bytes (nothing was stored)")
            if problem is not None:
                await PlainTextResponse(problem[1], status_code=problem[0])(scope, receive, send)
                return
        await self.app(scope, receive, _with_security_headers(send))


def _with_security_headers(send: Send) -> Send:
    async def wrapped(message) -> None:
        if message["type"] == "http.response.start":
            headers = MutableHeaders(scope=message)
            headers.setdefault("X-Content-Type-Options", "nosniff")
            headers.setdefault("Referrer-Policy", "no-referrer")
            headers.setdefault("X-Frame-Options", "DENY")
            # everything the pages use is served from here: nothing is fetched from elsewhere
            headers.setdefault("Content-Security-Policy",
                               "default-src 'self'; img-src 'self' data:; style-src 'self' 'unsafe-inline'; "
                               "frame-ancestors 'none'; form-action 'self'")
        await send(message)
    return wrapped
