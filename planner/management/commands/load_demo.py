"""Create the demo account and its scenarios (fictional island bakery); safe to run again."""

import json
from pathlib import Path

from django.conf import settings
from django.contrib.auth import get_user_model
from django.core.management.base import BaseCommand
from django.db import transaction

from planner import services
from planner.history.demo import load_demo_histories
from planner.kinds import get_kind
from planner.models import Scenario
from planner.portfolio.demo import load_demo_portfolio
from planner.repairlog.demo import load_demo_repair_logs

DEMO_FILE = Path(settings.BASE_DIR) / "fixtures" / "demo_scenarios.json"


class Command(BaseCommand):
    help = "Create (or refresh) the demo account and its scenarios, then print how to sign in."

    def handle(self, *args, **options):
        data = json.loads(DEMO_FILE.read_text(encoding="utf-8"))
        account = data["user"]
        with transaction.atomic():
            user, created = get_user_model().objects.get_or_create(
                username=account["username"], defaults={"email": account["email"]}
            )
            # Reset each run so the printed password is always the one that works.
            user.set_password(account["password"])
            user.save(update_fields=["password"])
            for item in data["scenarios"]:
                self._load(user, item)
            histories = load_demo_histories(user)
            repair_logs = load_demo_repair_logs(user)
            run = load_demo_portfolio(user)
        self.stdout.write(
            self.style.SUCCESS(
                f"Demo account {'created' if created else 'refreshed'}: "
                f"username {account['username']!r}, password {account['password']!r} "
                f"({len(data['scenarios'])} scenarios, {histories} {'history' if histories == 1 else 'histories'}, "
                f"{repair_logs} repair {'log' if repair_logs == 1 else 'logs'}, "
                f"a portfolio run of {run.rows:,} items: {run.get_status_display().lower()})."
            )
        )
        if not settings.DEBUG:
            self.stdout.write(
                self.style.WARNING("DEBUG is off: remove or re-password the demo account on a shared server.")
            )

    def _load(self, user, item: dict) -> None:
        kind = get_kind(item.get("kind", "stock_plan"))
        values = {
            "title": item["title"],
            "notes": item["notes"],
            "params": kind.params_from_json(item["parameters"]),
            "stockout_target": item["stockout_target"],
            "overflow_target": item["overflow_target"],
        }
        existing = Scenario.objects.filter(owner=user, title=item["title"]).first()
        if existing:
            services.scenario_update(scenario=existing, **values)
        else:
            services.scenario_create(owner=user, kind=kind.key, **values)
