"""A simulated tablet for the benchmarks: one keep-alive HTTP connection to 127.0.0.1 with a signed-in session.

Only the standard library, and only loopback: ``Tablet`` refuses any other host.
"""

import http.client
import re
import time
from dataclasses import dataclass
from html.parser import HTMLParser
from urllib.parse import urlencode

LOOPBACK = "127.0.0.1"
_SERVER_TIMING = re.compile(r"app;dur=([0-9.]+)")
_SERVER_CPU = re.compile(r"cpu;dur=([0-9.]+)")


@dataclass
class Reply:
    status: int
    body: bytes
    headers: dict
    ms: float  # round trip seen by the tablet
    server_ms: float | None  # time inside Django (Server-Timing from tests/bench/middleware.py)
    cpu_ms: float | None = None  # processor time of the request's thread inside Django

    @property
    def text(self):
        return self.body.decode("utf-8", "replace")


class Tablet:
    """One browser: a session cookie, a CSRF cookie and one connection kept open."""

    def __init__(self, port: int, session_key: str, csrf_token: str, host: str = LOOPBACK, timeout: float = 30.0):
        if host != LOOPBACK:
            raise ValueError("The benchmark only talks to 127.0.0.1.")
        self.host, self.port, self.timeout = host, port, timeout
        self.cookies = {"sessionid": session_key, "csrftoken": csrf_token}
        self.csrf_token = csrf_token
        self.connection = None

    def _connect(self):
        self.connection = http.client.HTTPConnection(self.host, self.port, timeout=self.timeout)

    def close(self):
        if self.connection is not None:
            self.connection.close()
            self.connection = None

    def request(self, method: str, path: str, data: dict | None = None, htmx: bool = False) -> Reply:
        headers = {
            "Host": f"{self.host}:{self.port}",
            "Cookie": "; ".join(f"{k}={v}" for k, v in self.cookies.items()),
            "Accept-Encoding": "identity",
        }
        body = None
        if method == "POST":
            headers["X-CSRFToken"] = self.csrf_token
            headers["Content-Type"] = "application/x-www-form-urlencoded"
            body = urlencode(data or {}, doseq=True).encode()
        if htmx:
            headers["HX-Request"] = "true"
        for attempt in (1, 2):
            if self.connection is None:
                self._connect()
            start = time.perf_counter()
            try:
                self.connection.request(method, path, body=body, headers=headers)
                response = self.connection.getresponse()
                payload = response.read()
            except (ConnectionError, http.client.HTTPException):
                # The server closed a kept-alive connection; open a new one once.
                self.close()
                if attempt == 2:
                    raise
                continue
            ms = (time.perf_counter() - start) * 1000
            if response.getheader("Connection", "").lower() == "close":
                self.close()
            timing = response.getheader("Server-Timing", "")
            found, cpu = _SERVER_TIMING.search(timing), _SERVER_CPU.search(timing)
            return Reply(
                response.status,
                payload,
                dict(response.getheaders()),
                ms,
                float(found.group(1)) if found else None,
                float(cpu.group(1)) if cpu else None,
            )
        raise AssertionError("unreachable")

    def get(self, path: str, htmx: bool = False) -> Reply:
        return self.request("GET", path, htmx=htmx)

    def post(self, path: str, data: dict, htmx: bool = False) -> Reply:
        return self.request("POST", path, data, htmx=htmx)


class FormFields(HTMLParser):
    """The values a browser would send for one form on a page (inputs and selects)."""

    def __init__(self, form_id: str):
        super().__init__()
        self.form_id, self.inside, self.select = form_id, False, None
        self.data: dict[str, str] = {}

    def handle_starttag(self, tag, attrs):
        a = dict(attrs)
        if tag == "form" and a.get("id") == self.form_id:
            self.inside = True
        if not self.inside:
            return
        if tag == "input" and a.get("name"):
            self.data[a["name"]] = a.get("value") or ""
        elif tag == "select":
            self.select = a.get("name")
        elif tag == "option" and self.select and ("selected" in a or self.select not in self.data):
            self.data[self.select] = a.get("value") or ""

    def handle_endtag(self, tag):
        if tag == "select":
            self.select = None
        elif tag == "form":
            self.inside = False


def form_fields(html: str, form_id: str) -> dict[str, str]:
    parser = FormFields(form_id)
    parser.feed(html)
    return parser.data
