"""Benchmark (not a test): portfolio runs on the database queue with one and with two worker processes.

    .venv/bin/python manage.py bench_portfolio                 # 10,000 stock items and 10,000 reorder items
    .venv/bin/python manage.py bench_portfolio --stock 400     # fewer stock items (the rate is per item)
    .venv/bin/python manage.py bench_portfolio --mean-decimals 3   # nearly every item with its own demand law

Generates, with a fixed seed, a stock-plan portfolio (90 daily periods, capacities up to 200, Poisson
daily demand and deliveries up to 20, smallest start and capacity for every item) and a reorder portfolio
(Poisson daily demand up to 20, lead times up to 30 days, cycle-service targets). Each is stored, queued
on its own queue ("benchmark") and worked out by 1, then 2, ``manage.py db_worker`` processes started
beforehand (long-lived, as in production); the clock runs from the queueing to the run's close. Prints
seconds, rows a second, the two-worker speed-up and the share of worker time spent outside the engine
(queue, database, building results), from the engine seconds each chunk records. Uses the configured
database (DATABASE_URL); the benchmark's runs are deleted afterwards. Issue targets: <= 20 s for 10,000
stock items with two workers, <= 5 s for 10,000 reorder items, a two-worker speed-up of at least 1.6.
"""

from __future__ import annotations

import io
import os
import subprocess
import sys
import tempfile
import time

import numpy as np
from django.conf import settings
from django.contrib.auth import get_user_model
from django.core.management.base import BaseCommand, CommandError
from django.db.models import Sum
from django_tasks_db.models import DBTaskResult

from planner.portfolio import services
from planner.portfolio.items_file import read_items
from planner.portfolio.models import OPEN_STATUSES, PortfolioRun

QUEUE = "benchmark"
WORKER_START = 8.0  # seconds given to the workers to start (import the engine, connect) before the clock runs
SEED = 20241203
USER = "bench-portfolio"


def stock_csv(count: int, rng, decimals: int = 1) -> bytes:
    lines = ["item,kind,demand mean,supply mean,start level,capacity,horizon,stock-out target %,overflow target %"]
    for n in range(count):
        mean = round(float(rng.uniform(1.0, 20.0)), decimals)
        capacity = int(rng.integers(40, 201))
        start = int(capacity * rng.uniform(0.3, 0.7))
        lines.append(f"S{n},stock,{mean},{mean},{start},{capacity},90,1,1")
    return ("\n".join(lines) + "\n").encode()


def reorder_csv(count: int, rng, decimals: int = 1) -> bytes:
    lines = ["item,kind,demand mean,lead time,service target %"]
    for n in range(count):
        mean = round(float(rng.uniform(0.5, 20.0)), decimals)
        lines.append(f"R{n},reorder,{mean},{int(rng.integers(1, 31))},{rng.choice([90, 95, 98, 99])}")
    return ("\n".join(lines) + "\n").encode()


class Command(BaseCommand):
    help = "Time portfolio runs on the database queue with one and two db_worker processes."

    def add_arguments(self, parser):
        parser.add_argument("--stock", type=int, default=10_000, help="stock items (default 10,000)")
        parser.add_argument("--reorder", type=int, default=10_000, help="reorder items (default 10,000)")
        parser.add_argument("--workers", default="1,2", help="worker counts to time, comma-separated")
        parser.add_argument(
            "--mean-decimals",
            type=int,
            default=1,
            choices=range(0, 5),
            help="decimals of each item's demand mean (default 1; 3 gives nearly every item a law of its own)",
        )

    def handle(self, *args, stock: int, reorder: int, workers: str, mean_decimals: int, **options):
        if settings.TASKS["default"]["BACKEND"] != "django_tasks_db.DatabaseBackend":
            raise CommandError("bench_portfolio needs the database queue (PLANNER_TASKS_BACKEND=database)")
        counts = [int(n) for n in workers.split(",")]
        owner, _ = get_user_model().objects.get_or_create(username=USER)
        database = settings.DATABASES["default"]["ENGINE"].rsplit(".", 1)[-1]
        self.stdout.write(
            f"database: {database}; chunk: {settings.PORTFOLIO_CHUNK_ITEMS} items; cores: {os.cpu_count()}"
        )
        for name, make, count in (("stock plans", stock_csv, stock), ("reorder points", reorder_csv, reorder)):
            if not count:
                continue
            data = make(count, np.random.default_rng(SEED), mean_decimals)
            seconds = {}
            for workers_now in counts:
                seconds[workers_now] = self._time(owner, name, data, workers_now)
            if len(seconds) > 1 and min(seconds) in seconds and max(seconds) in seconds:
                speed_up = seconds[min(seconds)] / seconds[max(seconds)]
                self.stdout.write(f"  {name}: speed-up {min(seconds)} -> {max(seconds)} workers: {speed_up:.2f}x")

    def _time(self, owner, name: str, data: bytes, workers: int) -> float:
        parsed = read_items(io.BytesIO(data))
        run = services.run_create(owner=owner, title=f"bench {name}", parsed=parsed)
        processes = [self._worker(n) for n in range(workers)]
        time.sleep(WORKER_START)  # long-lived workers, as in production: their start is not timed
        began = time.perf_counter()
        run = services.run_start(run=run, queue_name=QUEUE)
        while run.status in OPEN_STATUSES:
            time.sleep(0.05)
            run.refresh_from_db(fields=["status"])
            for process in processes:
                if process.poll() is not None:
                    process.errors.seek(0)
                    raise CommandError(f"a worker stopped: {process.errors.read().decode()[-2000:]}")
        seconds = time.perf_counter() - began
        for process in processes:
            process.terminate()
            process.wait(30)
        run.refresh_from_db()
        sums = run.chunks.aggregate(engine=Sum("engine_seconds"), answered=Sum("answered"))
        engine, answered = sums["engine"] or 0.0, sums["answered"] or 0
        outside = max(0.0, 1 - engine / (seconds * workers))
        self.stdout.write(
            f"  {name}: {run.rows:,} rows, {workers} worker{'s' if workers > 1 else ''}: {seconds:.1f} s, "
            f"{run.rows / seconds:,.0f} rows/s ({answered:,} answered, run {run.status}); "
            f"engine {engine:.1f} s of {seconds * workers:.1f} worker-seconds: {100 * outside:.0f} % outside the engine"
        )
        DBTaskResult.objects.filter(queue_name=QUEUE).delete()
        PortfolioRun.objects.filter(pk=run.pk).delete()
        return seconds

    def _worker(self, number: int) -> subprocess.Popen:
        command = [
            sys.executable,
            "manage.py",
            "db_worker",
            "--queue-name",
            QUEUE,
            "--interval",
            "0.05",
            "--no-startup-delay",
            "--no-reload",
            "--verbosity",
            "0",
            "--worker-id",
            f"bench-{number}",
        ]
        errors = tempfile.TemporaryFile()  # noqa: SIM115 (closed with the process; a pipe could fill and stall it)
        process = subprocess.Popen(command, cwd=settings.BASE_DIR, stdout=subprocess.DEVNULL, stderr=errors)
        process.errors = errors
        return process
