"""Headers and addresses the security settings rely on.

``ContentSecurityPolicyMiddleware`` sends ``settings.CONTENT_SECURITY_POLICY``
on every response: pages load scripts, styles, images and data from this site
only, and run no inline script. Three inline ``<style>`` elements are allowed,
each by the SHA-256 hash of its exact text (any other inline style element is
refused):

- the bare error page's (``templates/error_bare.html``, used when the app itself
  may be broken, so it links no static file), hashed here from the template, so
  editing those styles cannot break the page;
- plotly.js's empty ``<style id="plotly.js-style-global">``, which it then fills
  through the CSSOM (``insertRule``, which a policy does not govern);
- the map styles of the maplibre library bundled in plotly.js 4.1.1, added when
  plotly.js loads (the planner draws no maps; the hash only keeps the console
  clean). A new plotly.js bundle may change it: the browser tests report any
  refusal.

plotly also sets ``style`` attributes (superscript exponents on log axes, colour
bar fills), hence ``style-src-attr 'unsafe-inline'``: a style attribute cannot
select other elements, and any image or font it names must still come from this
site (``img-src``, ``font-src``).

``client_address`` is the address the sign-in throttle counts (django-axes,
``AXES_CLIENT_IP_CALLABLE``).
"""

from __future__ import annotations

import base64
import hashlib
import re
from functools import cache

from django.conf import settings

BARE_ERROR_TEMPLATE = settings.BASE_DIR / "templates" / "error_bare.html"
PLOTLY_STYLE_HASHES = [
    "'sha256-47DEQpj8HBSa+/TImW+5JCeuQeRkm5NMpJWZG3hSuFU='",  # the empty text of plotly.js-style-global
    "'sha256-ji27qzEtxXZW+7dun6UwjHXJ18e6WAin1VvNtkzIE/o='",  # maplibre's map styles in plotly.js 4.1.1
]


def inline_style_hashes(template_text: str) -> list[str]:
    """CSP source expressions ('sha256-...') for each <style> block of a template with no tags inside it."""
    blocks = re.findall(r"<style>(.*?)</style>", template_text, flags=re.S)
    return [f"'sha256-{base64.b64encode(hashlib.sha256(block.encode()).digest()).decode()}'" for block in blocks]


@cache
def policy_header(policy: tuple[tuple[str, str], ...]) -> str:
    """The header's text: ``policy`` with the inline style hashes added to style-src and style-src-elem."""
    hashes = inline_style_hashes(BARE_ERROR_TEMPLATE.read_text(encoding="utf-8")) + PLOTLY_STYLE_HASHES
    parts = []
    for directive, sources in policy:
        if directive in ("style-src", "style-src-elem"):
            sources = " ".join([sources, *hashes])
        parts.append(f"{directive} {sources}")
    return "; ".join(parts)


class ContentSecurityPolicyMiddleware:
    def __init__(self, get_response):
        self.get_response = get_response

    def __call__(self, request):
        response = self.get_response(request)
        policy = tuple(settings.CONTENT_SECURITY_POLICY.items())
        response.headers.setdefault("Content-Security-Policy", policy_header(policy))
        return response


def client_address(request) -> str | None:
    """The client's address: REMOTE_ADDR, or with ``PLANNER_PROXY_COUNT`` proxies in front, the address the
    outermost of them saw (X-Forwarded-For read from the right, since a client can put anything at its left).

    A request that did not come through all the proxies (a shorter header) is counted by REMOTE_ADDR.
    """
    proxies = settings.PLANNER_PROXY_COUNT
    if proxies:
        forwarded = [part.strip() for part in request.META.get("HTTP_X_FORWARDED_FOR", "").split(",")]
        if len(forwarded) >= proxies and forwarded[-proxies]:
            return forwarded[-proxies]
    return request.META.get("REMOTE_ADDR")
