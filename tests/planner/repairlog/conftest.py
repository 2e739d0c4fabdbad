"""Repair logs for the view tests: the co-operative's delivery-van tyres, simulated with a fixed seed."""

import datetime

import numpy as np
import pytest
from django.core.files.uploadedfile import SimpleUploadedFile

from planner.repairlog.services import repairlog_create
from planner.repairlog_file import read_canonical

FIRST = datetime.date(2025, 1, 1)
FRAME = {"time_unit": "day", "record_start": "2025-01-01", "record_end": "2025-12-31", "units": 8, "spares": 3}


def tyre_csv(seed: int = 2, failures: int = 30, mean_repair: float = 4.0) -> bytes:
    """``failures`` tyre failures spread over 2025, each back after an exponential repair (whole days);
    every tyre a new name, so no tyre fails twice while in repair; past the year's end still in repair."""
    rng = np.random.default_rng(seed)
    failed = np.sort(rng.integers(0, 364, failures))
    back = failed + np.floor(rng.exponential(mean_repair, failures)).astype(int)
    rows = ["unit,failed,returned"] + [
        f"tyre-{i:03d},{FIRST + datetime.timedelta(days=int(f))},"
        + (str(FIRST + datetime.timedelta(days=int(b))) if b <= 364 else "")
        for i, (f, b) in enumerate(zip(failed, back, strict=True))
    ]
    return ("\n".join(rows) + "\n").encode()


def upload(data: bytes, name: str = "tyres.csv") -> SimpleUploadedFile:
    return SimpleUploadedFile(name, data, content_type="text/csv")


@pytest.fixture
def repair_log(owner):
    """Bryn's year of delivery-van tyres: 8 in service, 3 spares."""
    log = read_canonical(tyre_csv().decode(), **FRAME)
    return repairlog_create(owner=owner, title="Van tyres, 2025", log=log, notes="Delivery vans.")
