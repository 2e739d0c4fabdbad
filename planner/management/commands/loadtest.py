"""Load test: concurrent clients against results pages and what-if JSON (a benchmark, not a test).

Starts gunicorn (sync workers, DEBUG off, static files collected) on a free local port unless
--url names a running server, signs the demo account in over HTTP, then lets --clients threads
fetch the demo scenarios' results pages and what-if JSON in turn for --duration seconds.
Reports p50/p95 latency, requests per second and errors per kind of request.
"""

from __future__ import annotations

import http.client
import json
import os
import re
import secrets
import socket
import statistics
import subprocess
import sys
import threading
import time
from dataclasses import dataclass, field
from http.cookies import SimpleCookie
from pathlib import Path
from urllib.parse import urlencode, urlsplit

from django.conf import settings
from django.core.management.base import BaseCommand, CommandError
from django.urls import reverse

from planner.models import Scenario

DEMO_FILE = Path(settings.BASE_DIR) / "fixtures" / "demo_scenarios.json"
# Issue targets for the demo scenarios under 8 clients on the 2-core machine (milliseconds, p95).
TARGETS_MS = {"results page": 150.0, "what-if JSON": 80.0}


@dataclass
class Tally:
    """Latencies (ms) and failures of one kind of request, shared by the client threads."""

    latencies: list[float] = field(default_factory=list)
    errors: list[str] = field(default_factory=list)
    lock: threading.Lock = field(default_factory=threading.Lock)

    def add(self, ms: float, error: str | None) -> None:
        with self.lock:
            if error is None:
                self.latencies.append(ms)
            else:
                self.errors.append(error)


def percentile(values: list[float], share: float) -> float:
    """The ``share`` quantile (0 < share < 1) by linear interpolation between order statistics."""
    if not values:
        return float("nan")
    ordered = sorted(values)
    position = share * (len(ordered) - 1)
    low = int(position)
    high = min(low + 1, len(ordered) - 1)
    return ordered[low] + (ordered[high] - ordered[low]) * (position - low)


class Session:
    """A signed-in HTTP session (cookies kept by hand; one new connection per request, as sync
    gunicorn workers close each connection after the response)."""

    def __init__(self, base_url: str):
        parts = urlsplit(base_url)
        self.host, self.port = parts.hostname, parts.port or 80
        self.cookies: dict[str, str] = {}

    def request(self, method: str, path: str, body: str | None = None, headers: dict | None = None):
        conn = http.client.HTTPConnection(self.host, self.port, timeout=60)
        try:
            all_headers = {"Host": f"{self.host}:{self.port}", **(headers or {})}
            if self.cookies:
                all_headers["Cookie"] = "; ".join(f"{k}={v}" for k, v in self.cookies.items())
            conn.request(method, path, body=body, headers=all_headers)
            response = conn.getresponse()
            data = response.read()
            for header in response.headers.get_all("Set-Cookie") or []:
                for name, morsel in SimpleCookie(header).items():
                    self.cookies[name] = morsel.value
            return response.status, response.headers, data
        finally:
            conn.close()

    def sign_in(self, username: str, password: str) -> None:
        login = reverse("login")
        status, _, page = self.request("GET", login)
        found = re.search(rb'name="csrfmiddlewaretoken" value="([^"]+)"', page)
        if status != 200 or not found:
            raise CommandError(f"could not open the sign-in page (status {status})")
        form = urlencode({"username": username, "password": password, "csrfmiddlewaretoken": found.group(1).decode()})
        headers = {
            "Content-Type": "application/x-www-form-urlencoded",
            "Referer": f"http://{self.host}:{self.port}{login}",
        }
        status, _, _ = self.request("POST", login, body=form, headers=headers)
        if status != 302 or "sessionid" not in self.cookies:
            raise CommandError(f"could not sign in as {username!r} (status {status}); run manage.py load_demo first")


def whatif_queries(saved: dict) -> list[dict]:
    """Three what-ifs on a saved scenario's main level, one lower, as saved and one higher, kept in
    range: a plan's start stock (inside its band) or a pool's spares; none for other kinds."""
    if "start" in saved:
        start, low, high = saved["start"], saved.get("low", 0), saved.get("high")
        top = high if high is not None else start + 1
        extra = {"horizon": saved["horizon"]} if "horizon" in saved else {}
        return [{"start": value} | extra for value in sorted({max(low, start - 1), start, min(top, start + 1)})]
    if "spares" in saved:
        spares = saved["spares"]
        return [{"spares": value} for value in sorted({max(0, spares - 1), spares, spares + 1})]
    return []


def workload(scenarios) -> list[tuple[str, str, str]]:
    """(kind, scenario title, path) the clients cycle through: each results page, and three what-ifs
    on each scenario's main level (``whatif_queries``)."""
    jobs = []
    for scenario in scenarios:
        saved = scenario.parameters  # the stored JSON: read the same way whatever the kind's classes are
        jobs.append(("results page", scenario.title, reverse("scenario_results", args=[scenario.pk])))
        for query in whatif_queries(saved):
            path = f"{reverse('scenario_outlook_json', args=[scenario.pk])}?{urlencode(query)}"
            jobs.append(("what-if JSON", scenario.title, path))
    return jobs


def free_port() -> int:
    with socket.socket() as sock:
        sock.bind(("127.0.0.1", 0))
        return sock.getsockname()[1]


class Command(BaseCommand):
    help = "Drive concurrent clients against results pages and what-if JSON; print p50/p95, req/s, errors."

    def add_arguments(self, parser):
        parser.add_argument("--url", help="a running server to test (default: start gunicorn here)")
        parser.add_argument("--workers", type=int, default=2, help="gunicorn workers (default 2)")
        parser.add_argument("--clients", type=int, default=8, help="concurrent client threads (default 8)")
        parser.add_argument("--duration", type=float, default=30.0, help="seconds of measured load (default 30)")
        parser.add_argument("--warmup", type=float, default=3.0, help="seconds of unmeasured load first")
        parser.add_argument("--username", default="demo")
        parser.add_argument("--password", help="default: the demo account's password from the fixture")

    def handle(self, *args, url, workers, clients, duration, warmup, username, password, **options):
        scenarios = list(Scenario.objects.filter(owner__username=username).order_by("pk"))
        if not scenarios:
            raise CommandError(f"user {username!r} has no scenarios; run manage.py load_demo first")
        password = password or json.loads(DEMO_FILE.read_text(encoding="utf-8"))["user"]["password"]
        server = None
        if url is None:
            server, url = self._start_gunicorn(workers)
        try:
            session = Session(url)
            session.sign_in(username, password)
            jobs = workload(scenarios)
            self._run(session, jobs, clients, warmup, record=False)
            tallies, elapsed = self._run(session, jobs, clients, duration, record=True)
        finally:
            if server is not None:
                server.terminate()
                server.wait(timeout=20)
        self._report(tallies, elapsed, clients, workers if server is not None else None, len(scenarios))

    def _start_gunicorn(self, workers: int):
        env = os.environ | {"DEBUG": "0"}
        if settings.DEBUG or not os.environ.get("SECRET_KEY"):
            env["SECRET_KEY"] = secrets.token_urlsafe(48)  # this run only
        manage = str(Path(settings.BASE_DIR) / "manage.py")
        subprocess.run([sys.executable, manage, "collectstatic", "--noinput", "--verbosity", "0"], env=env, check=True)
        port = free_port()
        command = [sys.executable, "-m", "gunicorn", "planner.wsgi", "--workers", str(workers)]
        command += ["--bind", f"127.0.0.1:{port}", "--log-level", "warning"]
        server = subprocess.Popen(command, cwd=settings.BASE_DIR, env=env)
        url = f"http://127.0.0.1:{port}"
        deadline = time.monotonic() + 30
        while time.monotonic() < deadline:
            try:
                if Session(url).request("GET", reverse("login"))[0] == 200:
                    self.stdout.write(f"gunicorn: {workers} workers on {url}")
                    return server, url
            except OSError:
                time.sleep(0.2)
        server.terminate()
        raise CommandError("gunicorn did not answer within 30 s")

    def _run(self, session: Session, jobs, clients: int, seconds: float, record: bool):
        tallies = {(kind, title): Tally() for kind, title, _ in jobs}
        deadline = time.monotonic() + seconds

        def client(offset: int) -> None:
            mine = Session.__new__(Session)
            mine.host, mine.port, mine.cookies = session.host, session.port, dict(session.cookies)
            index = offset
            while time.monotonic() < deadline:
                kind, title, path = jobs[index % len(jobs)]
                index += 1
                began = time.perf_counter()
                try:
                    status, _, _ = mine.request("GET", path, headers={"Accept": "text/html,application/json"})
                    error = None if status == 200 else f"{status} {path}"
                except (OSError, http.client.HTTPException) as exc:
                    error = f"{type(exc).__name__} {path}"
                tallies[kind, title].add(1000 * (time.perf_counter() - began), error)

        threads = [threading.Thread(target=client, args=(i * len(jobs) // clients,)) for i in range(clients)]
        began = time.perf_counter()
        for thread in threads:
            thread.start()
        for thread in threads:
            thread.join()
        return tallies, time.perf_counter() - began

    def _report(self, tallies, elapsed: float, clients: int, workers: int | None, scenarios: int) -> None:
        server = f"gunicorn, {workers} sync workers" if workers else "the given server"
        self.stdout.write(f"\n{clients} clients, {elapsed:.1f} s, {scenarios} demo scenarios, {server}\n")
        self.stdout.write("| request | count | errors | p50 ms | p95 ms | max ms | req/s | p95 target |")
        self.stdout.write("|---|---:|---:|---:|---:|---:|---:|---|")
        by_kind: dict[str, Tally] = {}
        for (kind, _), tally in tallies.items():
            merged = by_kind.setdefault(kind, Tally())
            merged.latencies += tally.latencies
            merged.errors += tally.errors
        for kind, tally in by_kind.items():
            target = TARGETS_MS.get(kind)
            p95 = percentile(tally.latencies, 0.95)
            verdict = "" if target is None else f"<= {target:.0f} ms: {'met' if p95 <= target else 'missed'}"
            self.stdout.write(self._row(kind, tally, elapsed, verdict))
            for error in tally.errors[:3]:
                self.stdout.write(f"  error: {error}")
        total = sum(len(t.latencies) + len(t.errors) for t in by_kind.values())
        self.stdout.write(f"\nall requests: {total / elapsed:.1f} req/s\n\nby scenario:\n")
        self.stdout.write("| request | count | errors | p50 ms | p95 ms | max ms | req/s | scenario |")
        self.stdout.write("|---|---:|---:|---:|---:|---:|---:|---|")
        for (kind, title), tally in tallies.items():
            self.stdout.write(self._row(kind, tally, elapsed, title))

    @staticmethod
    def _row(kind: str, tally: Tally, elapsed: float, last: str) -> str:
        done = tally.latencies
        median = statistics.median(done) if done else float("nan")
        worst = max(done) if done else float("nan")
        return (
            f"| {kind} | {len(done) + len(tally.errors)} | {len(tally.errors)} | {median:.0f} | "
            f"{percentile(done, 0.95):.0f} | {worst:.0f} | {len(done) / elapsed:.1f} | {last} |"
        )
