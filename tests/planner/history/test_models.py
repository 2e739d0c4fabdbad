"""The saved history: database constraints, the check of its rows, and the history it gives back."""

import datetime

import numpy as np
import pytest
from django.core.exceptions import ValidationError
from django.db import IntegrityError, transaction

from planner.history.models import SavedHistory
from tests.planner.history.conftest import levels_csv, movements_csv, parse

pytestmark = pytest.mark.django_db


def test_the_saved_history_reads_back_as_the_reader_read_it(history):
    read = parse(movements_csv())
    back = SavedHistory.objects.get(pk=history.pk).parsed()
    assert back.dates == read.dates and back.shape == "movements" and back.period == "day"
    np.testing.assert_array_equal(back.arrivals, read.arrivals)
    np.testing.assert_array_equal(back.changes(), read.changes())
    assert history.last_date == datetime.date(2025, 5, 25)


def test_weekly_dates_are_seven_days_apart(owner):
    from planner.history.services import history_create

    history = history_create(
        owner=owner, title="Oats, weekly", parsed=parse(b"date,level\n2025-01-06,4\n2025-01-13,5\n", "week")
    )
    assert history.last_date == datetime.date(2025, 1, 13)
    assert history.parsed().dates == (datetime.date(2025, 1, 6), datetime.date(2025, 1, 13))


def test_rows_that_do_not_match_their_count_are_refused(level_history):
    level_history.series = {"level": [1, 2]}
    with pytest.raises(ValidationError, match="column level must hold 60 whole numbers"):
        level_history.full_clean()
    level_history.series = {"in": [1] * 60}
    with pytest.raises(ValidationError, match="series must hold the columns level"):
        level_history.full_clean()


# "month" fits the column (8 characters), so the check constraint, not the column length, must refuse it
@pytest.mark.parametrize(("field", "value"), [("title", ""), ("period", "month"), ("shape", "tea"), ("rows", 0)])
def test_the_database_refuses_what_the_checks_refuse(owner, field, value):
    fields = {"owner": owner, "title": "Oats", "period": "day", "shape": "levels", "rows": 2}
    fields |= {"first_date": datetime.date(2025, 1, 6), "series": {"level": [1, 2]}, field: value}
    with pytest.raises(IntegrityError), transaction.atomic():
        SavedHistory.objects.create(**fields)


def test_levels_history_round_trip(level_history):
    np.testing.assert_array_equal(level_history.parsed().levels, parse(levels_csv()).levels)
