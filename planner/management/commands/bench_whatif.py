"""Server time of the what-if JSON endpoint for the demo scenarios (a benchmark, not a test).

Runs the real view through Django's test client against the configured database
(load_demo first) and reports the median and worst of several calls per scenario.
"""

import statistics
import time

from django.contrib.auth import get_user_model
from django.core.management.base import BaseCommand
from django.test import Client
from django.urls import reverse

from planner.models import Scenario


class Command(BaseCommand):
    help = "Time the what-if JSON endpoint on the demo scenarios."

    def add_arguments(self, parser):
        parser.add_argument("--repeat", type=int, default=15)
        parser.add_argument("--username", default="demo")

    def handle(self, *args, repeat, username, **options):
        user = get_user_model().objects.get(username=username)
        client = Client(HTTP_HOST="localhost")
        client.force_login(user)
        for scenario in Scenario.objects.filter(owner=user).order_by("pk"):
            params = scenario.params
            url = reverse("scenario_outlook_json", args=[scenario.pk])
            query = {"start": max(params.low, params.start - 1), "horizon": params.horizon}
            client.get(url, query)  # warm caches (imports, plotly validators)
            wall, server = [], []
            for _ in range(repeat):
                began = time.perf_counter()
                response = client.get(url, query)
                wall.append(1000 * (time.perf_counter() - began))
                server.append(float(response["Server-Timing"].split("dur=")[1]))
            self.stdout.write(
                f"{scenario.title}: server median {statistics.median(server):.1f} ms, worst {max(server):.1f} ms; "
                f"request incl. session/JSON median {statistics.median(wall):.1f} ms (status {response.status_code})"
            )
