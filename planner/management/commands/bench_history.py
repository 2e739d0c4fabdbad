"""Time the history pages on the demo history and the demo repair log's page (a benchmark, not a test).

Runs the real views through Django's test client against the configured
database: the upload of the demo file with its preview, then the fit page
for a few start/capacity/horizon inputs, each the median of several calls,
with the draws the page's budget afforded. The credible range spends about
the whole ``PLANNER_COMPUTE_CAP`` whenever it is shown, so these pages are
also the costliest the cap allows at their sizes. Run load_demo first. Last,
each demo repair log's page (its fit and the availability's credible range).
"""

import statistics
import time

from django.contrib.auth import get_user_model
from django.core.management.base import BaseCommand
from django.test import Client
from django.urls import reverse

from planner.history.demo import DEMO_FILE
from planner.models import SavedHistory, SavedRepairLog

INPUTS = [
    {"start": 200, "high": 400, "horizon": 28},
    {"start": 200, "high": 400, "horizon": 56},
    {"start": 200, "high": 400, "horizon": 90},
    {"start": 200, "horizon": 28},
]


class Command(BaseCommand):
    help = "Time the history upload and fit pages on the demo history."

    def add_arguments(self, parser):
        parser.add_argument("--repeat", type=int, default=5)
        parser.add_argument("--username", default="demo")

    def handle(self, *args, repeat, username, **options):
        user = get_user_model().objects.get(username=username)
        history = SavedHistory.objects.filter(owner=user).order_by("pk").first()
        client = Client(HTTP_HOST="localhost")
        client.force_login(user)
        demo_csv = DEMO_FILE.with_name(history.file_name)

        def upload():
            with demo_csv.open("rb") as file:
                return client.post(reverse("history_new"), {"title": "bench", "period": "day", "file": file})

        wall, _ = self._time(upload, repeat)
        self.stdout.write(f"upload and preview, {history.rows} rows: median {wall:.0f} ms")
        url = reverse("history_fit", args=[history.pk])
        for query in INPUTS:
            response = client.get(url, query)  # warm up, and the draws it shows
            body = response.content.decode()
            draws = body.split('id="draws">', 1)[1].split("<", 1)[0] if 'id="draws">' in body else "-"
            wall, server = self._time(lambda query=query: client.get(url, query), repeat)
            capacity = query.get("high", "none")
            self.stdout.write(
                f"fit page, start {query['start']}, capacity {capacity}, {query['horizon']} days: median {wall:.0f} ms "
                f"(server {server:.0f} ms), {draws} draws (status {response.status_code})"
            )
        for saved in SavedRepairLog.objects.filter(owner=user).order_by("pk"):
            url = saved.get_absolute_url()
            body = client.get(url).content.decode()
            draws = body.split('id="draws">', 1)[1].split("<", 1)[0] if 'id="draws">' in body else "-"
            wall, _ = self._time(lambda url=url: client.get(url), repeat)
            self.stdout.write(
                f"repair log page, {saved.failures} failures, {saved.units} units + {saved.spares} spares: "
                f"median {wall:.0f} ms, {draws} draws of the rates"
            )

    @staticmethod
    def _time(call, repeat: int) -> tuple[float, float | None]:
        """Median wall time of ``call`` and median server time (its Server-Timing header, when sent), in ms."""
        wall, server = [], []
        for _ in range(max(repeat, 1)):
            began = time.perf_counter()
            response = call()
            wall.append(1000 * (time.perf_counter() - began))
            if response.has_header("Server-Timing"):
                server.append(float(response["Server-Timing"].split("dur=")[1]))
        return statistics.median(wall), statistics.median(server) if server else None
