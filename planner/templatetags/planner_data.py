"""``json_data``: Django's ``json_script`` output, built faster for the large chart data of a results page.

``json_script`` escapes ``<``, ``>`` and ``&`` with ``str.translate`` and a dict, which costs about 4 ms on
a results page's 85 KB of chart JSON; three ``str.replace`` calls give the same text in a tenth of it,
and the JSON itself comes from orjson (``planner.json_text``).
"""

from django import template
from django.utils.html import format_html
from django.utils.safestring import mark_safe

from planner import json_text

register = template.Library()


@register.filter
def json_data(value, element_id: str):
    """``<script id="..." type="application/json">`` holding ``value``, safe inside HTML (as ``json_script``)."""
    text = json_text.dumps(value)
    text = text.replace("&", "\\u0026").replace("<", "\\u003C").replace(">", "\\u003E")
    return format_html('<script id="{}" type="application/json">{}</script>', element_id, mark_safe(text))
