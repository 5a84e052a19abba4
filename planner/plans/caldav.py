"""Publishing a plan's calendar file to a CalDAV calendar collection (RFC 4791) over plain HTTP.

:func:`publish` puts every VEVENT of a phaseplan calendar file into the collection as its own
resource (``<uid-hash>.ics``, a VCALENDAR holding the event and the VTIMEZONEs it uses), then:

- finds what is already there with one ``REPORT calendar-query`` (RFC 4791 §7.8) asking for each
  resource's ETag and calendar data;
- an event of the same UID is replaced (``If-Match`` its ETag), or left as it is when its content
  digest and SEQUENCE are unchanged; a new event is created (``If-None-Match: *``, so nothing that
  appeared meanwhile is overwritten);
- an event marked with the same plan id (``X-PHASEPLAN-PLAN``) whose UID is no longer in the file
  was dropped from the plan and is deleted (``If-Match``);
- everything else in the collection (the person's own appointments, other plans) is left alone.

Errors: a URL that is not http(s), refused credentials (HTTP 401/403), a URL that is not a
calendar collection (404/405/409) and other 4xx answers are bad input (:class:`InputError`,
exit 2); a server that cannot be reached, a 5xx answer or an event changed by someone else
during publishing (412) are failures (:class:`PublishError`, a ComputationError, exit 1).
The password comes from the caller (the CLI reads it from ``PHASEPLAN_CALDAV_PASSWORD`` or a
hidden prompt), never from the command line.
"""

from __future__ import annotations

import base64
import urllib.error
import urllib.parse
import urllib.request
import xml.etree.ElementTree as ElementTree
from dataclasses import dataclass, field

import icalendar

from planner.errors import ComputationError, InputError
from planner.plans.ics import DIGEST_PROPERTY, PLAN_PROPERTY, UID_DOMAIN

#: Environment variable holding the CalDAV password.
PASSWORD_VARIABLE = "PHASEPLAN_CALDAV_PASSWORD"
#: Seconds to wait for one HTTP answer (a design choice of this planner).
TIMEOUT_S = 30.0

_DAV = "DAV:"
_CALDAV = "urn:ietf:params:xml:ns:caldav"
_QUERY = (b'<?xml version="1.0" encoding="utf-8"?>'
          b'<c:calendar-query xmlns:d="DAV:" xmlns:c="urn:ietf:params:xml:ns:caldav">'
          b'<d:prop><d:getetag/><c:calendar-data/></d:prop>'
          b'<c:filter><c:comp-filter name="VCALENDAR"><c:comp-filter name="VEVENT"/></c:comp-filter></c:filter>'
          b'</c:calendar-query>')


class PublishError(ComputationError):
    """Publishing failed on the server's side (unreachable, 5xx, a concurrent change)."""


@dataclass(frozen=True)
class PublishResult:
    """What :func:`publish` did.

    Attributes
    ----------
    url : str
        The calendar collection.
    created, updated, unchanged, deleted : tuple of str
        UIDs of the plan's events by what happened to them.
    others : int
        Events in the collection that the plan did not create, left alone.
    statuses : dict of str to int
        HTTP status of each PUT and DELETE, by UID (201 created, 204 or 200 replaced or deleted).
    """

    url: str
    created: tuple[str, ...] = ()
    updated: tuple[str, ...] = ()
    unchanged: tuple[str, ...] = ()
    deleted: tuple[str, ...] = ()
    others: int = 0
    statuses: dict[str, int] = field(default_factory=dict)


@dataclass(frozen=True)
class _Remote:
    href: str
    etag: str | None
    uid: str
    plan: str | None
    digest: str
    sequence: int


def collection_url(url: str) -> str:
    """The collection URL, checked (http or https, with a host) and ending in ``/``."""
    parts = urllib.parse.urlsplit(url)
    if parts.scheme not in ("http", "https") or not parts.netloc:
        raise InputError(f"{url}: not a calendar URL; give http://host/path/ or https://host/path/", field="--url")
    return url if url.endswith("/") else url + "/"


def _request(method: str, url: str, auth: str | None, body: bytes | None = None, headers: dict | None = None,
             collection: str = "") -> tuple[int, bytes, dict]:
    request = urllib.request.Request(url, data=body, method=method, headers=dict(headers or {}))
    if auth is not None:
        request.add_header("Authorization", auth)
    try:
        with urllib.request.urlopen(request, timeout=TIMEOUT_S) as answer:
            return answer.status, answer.read(), dict(answer.headers)
    except urllib.error.HTTPError as exc:
        status = exc.code
        if status in (401, 403):
            raise InputError(f"{collection}: the server refused the credentials (HTTP {status}); check --user "
                             f"and {PASSWORD_VARIABLE}") from None
        if status in (404, 405, 409) and method == "REPORT":
            raise InputError(f"{collection}: not a calendar collection (HTTP {status}); give the URL of an "
                             "existing calendar") from None
        if status == 412:
            raise PublishError(f"{url}: changed on the server while publishing (HTTP 412); publish again") from None
        if 400 <= status < 500:
            raise InputError(f"{url}: the server refused {method} (HTTP {status} {exc.reason})") from None
        raise PublishError(f"{url}: server error on {method} (HTTP {status} {exc.reason})") from None
    except (urllib.error.URLError, OSError) as exc:
        reason = getattr(exc, "reason", exc)
        raise PublishError(f"{collection}: cannot reach the server ({reason})") from None


def _basic_auth(user: str | None, password: str | None) -> str | None:
    if user is None:
        return None
    token = base64.b64encode(f"{user}:{password or ''}".encode("utf-8")).decode("ascii")
    return f"Basic {token}"


def _read_file(data: bytes, source: str) -> icalendar.Calendar:
    try:
        calendar = icalendar.Calendar.from_ical(data)
    except ValueError as exc:
        raise InputError(f"not an iCalendar file ({exc})", source=source) from None
    events = calendar.walk("VEVENT")
    if not events:
        raise InputError("holds no events", source=source)
    for event in events:
        if PLAN_PROPERTY not in event or "UID" not in event:
            raise InputError(f"not a phaseplan calendar (an event without UID or {PLAN_PROPERTY}); only files "
                             "written by --ics can be published", source=source)
    return calendar


def _resource(calendar: icalendar.Calendar, event: icalendar.Event) -> bytes:
    """One event as its own VCALENDAR with the VTIMEZONEs it refers to (RFC 4791 §4.1)."""
    single = icalendar.Calendar()
    for name in ("PRODID", "VERSION", "CALSCALE"):
        if name in calendar:
            single.add(name, calendar[name])
    zones = {str(event[name].params["TZID"]) for name in ("DTSTART", "DTEND")
             if name in event and "TZID" in event[name].params}
    for zone in calendar.walk("VTIMEZONE"):
        if str(zone.get("TZID")) in zones:
            single.add_component(zone)
    single.add_component(event)
    return single.to_ical()


def _resource_name(uid: str) -> str:
    local = uid.split("@", 1)[0] if uid.endswith("@" + UID_DOMAIN) else uid
    return urllib.parse.quote(local, safe="") + ".ics"


def _remote_events(url: str, auth: str | None) -> list[_Remote]:
    _, body, _ = _request("REPORT", url, auth, _QUERY, {"Depth": "1", "Content-Type": "application/xml; charset=utf-8"},
                          collection=url)
    try:
        root = ElementTree.fromstring(body)
    except ElementTree.ParseError as exc:
        raise PublishError(f"{url}: unreadable answer to REPORT ({exc})") from None
    found = []
    for response in root.iter(f"{{{_DAV}}}response"):
        href = response.findtext(f"{{{_DAV}}}href") or ""
        etag = response.findtext(f".//{{{_DAV}}}getetag")
        data = response.findtext(f".//{{{_CALDAV}}}calendar-data")
        if not data:
            continue
        try:
            calendar = icalendar.Calendar.from_ical(data)
        except ValueError:
            continue  # not ours to judge: left alone
        for event in calendar.walk("VEVENT"):
            plan = event.get(PLAN_PROPERTY)
            found.append(_Remote(urllib.parse.urljoin(url, href), etag, str(event.get("UID")),
                                 str(plan) if plan is not None else None, str(event.get(DIGEST_PROPERTY, "")),
                                 int(event.get("SEQUENCE", 0))))
    return found


def publish(data: bytes, url: str, *, user: str | None = None, password: str | None = None,
            source: str = "calendar") -> PublishResult:
    """Publish a phaseplan calendar file to a CalDAV collection (see the module docstring).

    Parameters
    ----------
    data : bytes
        The calendar file (written by ``--ics``).
    url : str
        The calendar collection, e.g. ``https://dav.example.org/ana/plans/``.
    user, password : str, optional
        HTTP Basic credentials; without ``user`` no credentials are sent.
    source : str
        The file's name, for messages.

    Returns
    -------
    PublishResult
    """
    collection = collection_url(url)
    calendar = _read_file(data, source)
    auth = _basic_auth(user, password)
    events = {str(e["UID"]): e for e in calendar.walk("VEVENT")}
    plans = {str(e[PLAN_PROPERTY]) for e in events.values()}
    remote = _remote_events(collection, auth)
    by_uid = {r.uid: r for r in remote}
    created, updated, unchanged, deleted, statuses = [], [], [], [], {}
    for uid, event in events.items():
        existing = by_uid.get(uid)
        if existing is not None and existing.plan is not None and existing.plan not in plans:
            raise InputError(f"{collection}: event {uid} belongs to another plan ({existing.plan}); not replaced",
                             source=source)
        if (existing is not None and existing.digest == str(event.get(DIGEST_PROPERTY, ""))
                and existing.sequence == int(event.get("SEQUENCE", 0))):
            unchanged.append(uid)
            continue
        body = _resource(calendar, event)
        headers = {"Content-Type": "text/calendar; charset=utf-8"}
        if existing is None:
            target, headers["If-None-Match"] = collection + _resource_name(uid), "*"
        else:
            target = existing.href
            if existing.etag:
                headers["If-Match"] = existing.etag
        status, _, _ = _request("PUT", target, auth, body, headers, collection=collection)
        statuses[uid] = status
        (created if existing is None else updated).append(uid)
    others = 0
    for item in remote:
        if item.plan in plans and item.uid not in events:
            headers = {"If-Match": item.etag} if item.etag else {}
            status, _, _ = _request("DELETE", item.href, auth, None, headers, collection=collection)
            statuses[item.uid] = status
            deleted.append(item.uid)
        elif item.plan not in plans:
            others += 1
    return PublishResult(collection, tuple(created), tuple(updated), tuple(unchanged), tuple(deleted), others,
                         statuses)
