"""Histories for the view and fit tests: the co-operative's rye flour, made with a fixed seed."""

import datetime

import numpy as np
import pytest
from django.core.files.uploadedfile import SimpleUploadedFile

from planner.history.services import history_create
from planner.history_file import read_history

START = datetime.date(2025, 3, 3)  # a Monday


def movements_csv(days: int = 84, seed: int = 5, sacks_in: float = 12.0, sacks_out: float = 11.0) -> bytes:
    """``days`` of sacks in (Poisson) and out (Poisson), one row a day."""
    rng = np.random.default_rng(seed)
    rows = ["date,in,out"] + [
        f"{START + datetime.timedelta(days=i)},{a},{b}"
        for i, (a, b) in enumerate(zip(rng.poisson(sacks_in, days), rng.poisson(sacks_out, days), strict=True))
    ]
    return ("\r\n".join(rows) + "\r\n").encode()


def levels_csv(days: int = 60, seed: int = 6) -> bytes:
    """``days`` of end-of-day stock, moving by up to 3 sacks either way."""
    rng = np.random.default_rng(seed)
    levels = 40 + np.cumsum(rng.integers(-3, 4, days))
    return (
        "date,level\n" + "".join(f"{START + datetime.timedelta(days=i)},{v}\n" for i, v in enumerate(levels))
    ).encode()


def upload(data: bytes, name: str = "rye.csv") -> SimpleUploadedFile:
    return SimpleUploadedFile(name, data, content_type="text/csv")


def parse(data: bytes, period: str = "day"):
    return read_history(upload(data), period=period)


@pytest.fixture
def history(owner):
    """Olwen's twelve weeks of rye flour in and out of the bakehouse store."""
    return history_create(owner=owner, title="Rye flour, spring", parsed=parse(movements_csv()), notes="Bakehouse.")


@pytest.fixture
def level_history(owner):
    return history_create(owner=owner, title="Oat flour bin, levels", parsed=parse(levels_csv()))
