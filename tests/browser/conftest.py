"""Real-browser fixtures: Playwright for Python driving Debian's chromium, headless.

Outside CI the tests skip, with the reason printed, only when no browser is
found; in CI (the CI environment variable is set) a missing browser fails.
"""

import os
import shutil
from urllib.parse import urlsplit

import pytest

# Playwright's sync API runs an event loop in this thread; Django's ORM would refuse to run beside it.
os.environ["DJANGO_ALLOW_ASYNC_UNSAFE"] = "true"

CHROMIUM_ARGS = [
    "--no-sandbox",
    "--disable-gpu",
    "--disable-background-networking",
    "--disable-component-update",
    "--disable-sync",
    "--no-first-run",
]


def chromium_path() -> str | None:
    for candidate in (os.environ.get("CHROMIUM_PATH"), "/usr/bin/chromium", shutil.which("chromium")):
        if candidate and os.path.exists(candidate):
            return candidate
    return None


@pytest.fixture(scope="session")
def browser():
    path = chromium_path()
    if path is None:
        reason = "no chromium found (apt-get install -y chromium, or set CHROMIUM_PATH)"
        if os.environ.get("CI"):
            pytest.fail(f"browser tests need a browser in CI: {reason}")
        print(f"\nskipping browser tests: {reason}")
        pytest.skip(reason)
    sync_api = pytest.importorskip("playwright.sync_api", reason="playwright is not installed")
    with sync_api.sync_playwright() as playwright:
        browser = playwright.chromium.launch(executable_path=path, headless=True, args=CHROMIUM_ARGS)
        yield browser
        browser.close()


# Each page reports what the Content-Security-Policy refused (planner/security.py), so every browser test
# also shows that the pages, the charts and their toolbars work with the policy on.
REPORT_REFUSALS = """
window.__refused = [];
document.addEventListener("securitypolicyviolation", e => {
  const what = e.target && e.target.outerHTML ? e.target.outerHTML.slice(0, 120) : e.blockedURI;
  window.__refused.push(`${e.violatedDirective} refused ${what} (${e.sourceFile}:${e.lineNumber})`);
});
"""


@pytest.fixture
def page(browser):
    """A fresh page that records every request leaving this machine (charts must work offline) and
    everything the Content-Security-Policy refused; the test fails on either."""
    context = browser.new_context(viewport={"width": 1400, "height": 1000}, accept_downloads=True)
    context.add_init_script(REPORT_REFUSALS)
    page = context.new_page()
    page.set_default_timeout(20_000)
    outside, refused = [], []
    page.on("request", lambda request: outside.append(request.url) if _leaves_machine(request.url) else None)
    # A page that navigates away takes its list with it; the console keeps the browser's own report.
    page.on(
        "console", lambda message: refused.append(message.text) if "Content Security Policy" in message.text else None
    )
    yield page
    if not page.is_closed():
        refused.extend(page.evaluate("window.__refused || []"))
    context.close()
    assert not outside, f"the page fetched from outside this machine: {outside[:3]}"
    assert not refused, "the Content-Security-Policy refused:\n" + "\n".join(refused[:5])


def _leaves_machine(url: str) -> bool:
    host = urlsplit(url).hostname
    return url.startswith(("http://", "https://")) and host not in {"localhost", "127.0.0.1", "::1"}
