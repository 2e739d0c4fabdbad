"""``json_data`` gives exactly Django's ``json_script`` text (the reference), only faster."""

import pytest
from django.utils.html import json_script

from planner.templatetags.planner_data import json_data


@pytest.mark.parametrize(
    "value",
    [
        {"a": [1, 2.5, None], "b": "</script><script>alert(1)</script>"},
        {"title": "Tom & Jerry's <b>crates</b>", "z": [[0.1, 1e-300], [0.0, 1.0]]},
        ["plain", {"nested": {"x": ">>&&<<"}}],
    ],
)
def test_json_data_matches_json_script(value):
    assert json_data(value, "figures") == json_script(value, "figures")
    assert "</script><script>" not in json_data(value, "figures")[40:-9]
