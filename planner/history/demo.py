"""The demo histories (fixtures/demo_histories.json and the CSV files beside it), loaded for the demo account."""

from __future__ import annotations

import json
from pathlib import Path

from django.conf import settings

from planner.history import services
from planner.history.models import SavedHistory
from planner.history_file import read_history

DEMO_FILE = Path(settings.BASE_DIR) / "fixtures" / "demo_histories.json"


def load_demo_histories(user) -> int:
    """Create or refresh each demo history for ``user`` (read with the same reader as an upload); the count."""
    items = json.loads(DEMO_FILE.read_text(encoding="utf-8"))["histories"]
    for item in items:
        with DEMO_FILE.with_name(item["file"]).open("rb") as file:
            parsed = read_history(file, period=item["period"], name=item["file"])
        values = {"title": item["title"], "notes": item["notes"], "parsed": parsed, "file_name": item["file"]}
        existing = SavedHistory.objects.filter(owner=user, title=item["title"]).first()
        if existing:
            services.history_update(history=existing, **values)
        else:
            services.history_create(owner=user, **values)
    return len(items)
