"""``json_data`` holds the same data as Django's ``json_script`` (the reference), escaped as safely."""

import json
import re
from decimal import Decimal

import numpy as np
import pytest
from django.utils.html import json_script

from planner.json_text import dumps, json_response
from planner.templatetags.planner_data import json_data

SCRIPT = re.compile(r'^<script id="figures" type="application/json">(.*)</script>$', re.S)


def _content(html: str) -> str:
    return SCRIPT.match(html).group(1)


@pytest.mark.parametrize(
    "value",
    [
        {"a": [1, 2.5, None], "b": "</script><script>alert(1)</script>"},
        {"title": "Tom & Jerry's <b>crates</b>", "z": [[0.1, 1e-300], [0.0, 1.0]]},
        ["plain", {"nested": {"x": ">>&&<<"}}],
        {"tiny": [5e-324, 2.2250738585072014e-308, 0.1 + 0.2], "big": [2**53, 1e300]},
    ],
)
def test_json_data_holds_json_script_data(value):
    ours, reference = _content(json_data(value, "figures")), _content(json_script(value, "figures"))
    assert json.loads(ours) == json.loads(reference) == json.loads(json.dumps(value))
    assert not set("<>&") & set(ours)  # every one escaped, as json_script escapes them


def test_numbers_keys_and_decimals_as_the_standard_library_writes_them():
    value = {1: np.array([0.25, 1e-200]), "d": Decimal("1.50"), "n": np.float64(0.1)}
    assert json.loads(dumps(value)) == {"1": [0.25, 1e-200], "d": "1.50", "n": 0.1}
    response = json_response({"ok": [1, 2]}, status=400)
    assert response.status_code == 400 and response["Content-Type"] == "application/json"
    assert json.loads(response.content) == {"ok": [1, 2]}
