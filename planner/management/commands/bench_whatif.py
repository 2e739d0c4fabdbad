"""Server time of the what-if JSON endpoint for the demo scenarios (a benchmark, not a test).

Runs the real view through Django's test client against the configured database
(load_demo first) and reports the median and worst of several calls per scenario, and the
median CPU time of a call in this process (what two workers on two cores run out of under load;
other work on the machine inflates wall times but hardly the CPU times).
``--worst`` instead times the most expensive pages the compute cap still allows:
for each of a few plan shapes, the longest horizon within ``PLANNER_COMPUTE_CAP``;
and for a few reorder plans with lost sales (each order on its way followed), the
longest lead time within the cap (found by bisection on the priced work, which
grows with the lead time).
"""

import json
import statistics
import time

from django.conf import settings
from django.contrib.auth import get_user_model
from django.core.management.base import BaseCommand
from django.test import Client
from django.urls import reverse

from planner import reading
from planner.kinds import get_kind
from planner.models import Scenario

# Plan shapes near the cap's worst case: wide daily laws on a narrow store, many narrow periods, a weekly cycle.
WORST_SHAPES = {
    "capacity 200, Poisson 40 in and out": {"start": 100, "high": 200, "below": "lost", "step_method": "net"}
    | {"arrivals": {"family": "poisson", "mean": 40}, "demand": {"family": "poisson", "mean": 40}},
    "capacity 60, Poisson 150 in and out": {"start": 30, "high": 60, "below": "lost", "step_method": "net"}
    | {"arrivals": {"family": "poisson", "mean": 150}, "demand": {"family": "poisson", "mean": 150}},
    "capacity 20, negative binomial demand of 2,000 a day, daily delivery": {"start": 10, "high": 20}
    | {"below": "lost", "step_method": "net", "demand": {"family": "negative_binomial", "mean": 2000, "variance": 8000}}
    | {"delivery_every": 1, "delivery_size": 2000},
    "capacity 700, one up or down": {"start": 350, "high": 700, "below": "lost", "step_method": "nearest"}
    | {"up": 0.3, "down": 0.3},
    "capacity 300, weekly cycle": {"start": 150, "high": 300, "below": "lost", "step_method": "net"}
    | {"demand": {"family": "negative_binomial", "mean": 6, "variance": 18}, "profile": [1, 1, 1.2, 1.4, 0.6, 0.8, 0.9]}
    | {"delivery_every": 7, "delivery_size": 40},
    # Wide bands: the stock-by-day table's cell limit, not the horizon, stops these.
    "capacity 3,000, Poisson 40 in and out": {"start": 1500, "high": 3000, "below": "lost", "step_method": "net"}
    | {"arrivals": {"family": "poisson", "mean": 40.8}, "demand": {"family": "poisson", "mean": 40}},
    "capacity 2,000, Poisson 200 in and out": {"start": 1000, "high": 2000, "below": "lost", "step_method": "net"}
    | {"arrivals": {"family": "poisson", "mean": 200}, "demand": {"family": "poisson", "mean": 200}},
    "no capacity, Poisson 20 in and out, backorders": {"start": 200, "below": "backorder", "step_method": "net"}
    | {"arrivals": {"family": "poisson", "mean": 20.4}, "demand": {"family": "poisson", "mean": 20}},
    "capacity 500, negative binomial 300 a day (variance 3,000), daily delivery": {"start": 250, "high": 500}
    | {"below": "lost", "step_method": "net", "demand": {"family": "negative_binomial", "mean": 300, "variance": 3000}}
    | {"delivery_every": 1, "delivery_size": 300},
}

# Reorder plans whose unmet demand is lost: their page's work grows steeply with the lead time.
LOST_SALES_SHAPES = {
    "bread crates, Poisson 1.5 a day, 95 % of days without a stock-out, sales lost": {
        "demand": {"family": "poisson", "mean": 1.5},
        "target": 0.95,
    },
    "oven igniters, negative binomial 0.3 a day (variance 1.5), 99 % of days, sales lost": {
        "demand": {"family": "negative_binomial", "mean": 0.3, "variance": 1.5},
        "target": 0.99,
    },
    "flour sacks, Poisson 4 a day, 98 % fill rate, orders of any size, sales lost": {
        "demand": {"family": "poisson", "mean": 4.0},
        "target": 0.98,
        "measure": "fill",
        "order_quantity": 1,
    },
}


class Command(BaseCommand):
    help = "Time the what-if JSON endpoint on the demo scenarios (or, with --worst, the costliest allowed pages)."

    def add_arguments(self, parser):
        parser.add_argument("--repeat", type=int, default=15)
        parser.add_argument("--username", default="demo")
        parser.add_argument("--worst", action="store_true")

    def handle(self, *args, repeat, username, worst, **options):
        if worst:
            return self._worst()
        user = get_user_model().objects.get(username=username)
        client = Client(HTTP_HOST="localhost")
        client.force_login(user)
        for scenario in Scenario.objects.filter(owner=user).order_by("pk"):
            samples = get_kind(scenario.kind).sample_changes(scenario.params)
            url = reverse("scenario_outlook_json", args=[scenario.pk])
            query = samples[0] if samples else {}  # the first sample (a stock plan: start one lower)
            client.get(url, query)  # warm caches (imports)
            wall, server, cpu = [], [], []
            for _ in range(repeat):
                began, began_cpu = time.perf_counter(), time.process_time()
                response = client.get(url, query)
                wall.append(1000 * (time.perf_counter() - began))
                cpu.append(1000 * (time.process_time() - began_cpu))
                server.append(float(response["Server-Timing"].split("dur=")[1]))
            self.stdout.write(
                f"{scenario.title}: server median {statistics.median(server):.1f} ms, worst {max(server):.1f} ms; "
                f"request incl. session/JSON median {statistics.median(wall):.1f} ms, its CPU "
                f"{statistics.median(cpu):.1f} ms (status {response.status_code})"
            )

    def _worst(self) -> None:
        self._worst_stock_plans()
        self._worst_lost_sales()

    def _worst_lost_sales(self) -> None:
        kind = get_kind("reorder_plan")
        for name, shape in LOST_SALES_SHAPES.items():
            shape = shape | {"unmet": "lost", "period": "day"}
            lead = self._longest(kind, lambda lead_time, s=shape: s | {"lead_time": lead_time}, 365)
            if lead is None:
                self.stdout.write(f"{name}: refused at every lead time")
                continue
            scenario = Scenario(kind=kind.key, parameters=shape | {"lead_time": lead}, stockout_target=0.01)
            began = time.perf_counter()
            found = reading.scenario_reading(scenario=scenario)
            body = json.dumps({n: chart["figure"] for n, chart in kind.figures(found.result).items()})
            self.stdout.write(
                f"{name}, lead time {lead} days (longest within the cap of {settings.PLANNER_COMPUTE_CAP:.3g}): "
                f"{time.perf_counter() - began:.2f} s, figures {len(body) / 1e6:.2f} MB"
            )

    def _worst_stock_plans(self) -> None:
        kind = get_kind("stock_plan")
        for name, shape in WORST_SHAPES.items():
            horizon = self._longest_horizon(kind, shape)
            if horizon is None:
                self.stdout.write(f"{name}: refused at every horizon")
                continue
            scenario = Scenario(kind=kind.key, parameters=shape | {"horizon": horizon}, stockout_target=0.01)
            began = time.perf_counter()
            found = reading.scenario_reading(scenario=scenario)
            body = json.dumps({n: chart["figure"] for n, chart in kind.figures(found.result).items()})
            self.stdout.write(
                f"{name}, {horizon} days (longest within the cap of {settings.PLANNER_COMPUTE_CAP:.3g}): "
                f"{time.perf_counter() - began:.2f} s, figures {len(body) / 1e6:.2f} MB"
            )

    @classmethod
    def _longest_horizon(cls, kind, shape: dict) -> int | None:
        return cls._longest(kind, lambda horizon: shape | {"horizon": horizon}, 3650)

    @staticmethod
    def _longest(kind, parameters, largest: int) -> int | None:
        """The largest value in 1..largest whose plan ``parameters(value)`` the cap allows (work grows with it)."""

        def fits(value: int) -> bool:
            try:
                params = kind.params_from_json(parameters(value))
                job = kind.prepare(params, 0.01, 0.05)
                return sum(part.units for part in job.parts() if part.required) <= settings.PLANNER_COMPUTE_CAP
            except ValueError:
                return False

        low, high = 0, largest
        while low < high:
            middle = (low + high + 1) // 2
            low, high = (middle, high) if fits(middle) else (low, middle - 1)
        return low or None
