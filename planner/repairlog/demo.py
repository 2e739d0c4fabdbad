"""The demo repair logs (fixtures/demo_repair_logs.json and the CSV files beside it), loaded for the demo account."""

from __future__ import annotations

import json
from pathlib import Path

from django.conf import settings

from planner.repairlog import services
from planner.repairlog.models import SavedRepairLog
from planner.repairlog_file import read_repair_log

DEMO_FILE = Path(settings.BASE_DIR) / "fixtures" / "demo_repair_logs.json"
FRAME = ("time_unit", "units", "spares", "record_start", "record_end")


def load_demo_repair_logs(user) -> int:
    """Create or refresh each demo repair log for ``user`` (read with the same reader as an upload); the count."""
    items = json.loads(DEMO_FILE.read_text(encoding="utf-8"))["repair_logs"]
    for item in items:
        with DEMO_FILE.with_name(item["file"]).open("rb") as file:
            log = read_repair_log(file, name=item["file"], **{key: item[key] for key in FRAME})
        values = {"title": item["title"], "notes": item["notes"], "log": log, "file_name": item["file"]}
        existing = SavedRepairLog.objects.filter(owner=user, title=item["title"]).first()
        if existing:
            services.repairlog_update(saved=existing, **values)
        else:
            services.repairlog_create(owner=user, **values)
    return len(items)
