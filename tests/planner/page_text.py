"""The words a page shows and the tables it offers, for tests that read a page the way its reader does."""

import csv
import io
import re

from django.urls import reverse

# Words of the method that pages never show (they speak the trade's words: days, demand, stock-out).
METHOD_WORDS = ("walk", "step law", "band", "uniformization", "birth", "death", "chain", "generator", "markov")


def words_on(page: str) -> str:
    """The text inside ``<main>`` (the page's own, not the shared frame), scripts and tags removed,
    spaces collapsed."""
    main = page[page.index("<main") : page.index("</main>")]
    return re.sub(r"\s+", " ", re.sub(r"<[^>]+>", " ", re.sub(r"<script.*?</script>", " ", main, flags=re.S)))


def results_page(client, scenario, charts) -> tuple[str, str]:
    """The results page of ``scenario`` as its owner sees it, and its words, once every chart of ``charts``
    has its place and its text alternative and no method word shows."""
    client.force_login(scenario.owner)
    page = client.get(reverse("scenario_results", args=[scenario.pk])).content.decode()
    text = words_on(page)
    for chart in charts:
        assert f'id="fig-{chart}"' in page and f'id="fig-{chart}-summary"' in page, chart
    for word in METHOD_WORDS:
        assert word not in text.lower(), word
    return page, text


def download(client, scenario, table: str, query=None) -> tuple:
    """The CSV table ``table`` of ``scenario`` (what-if values in ``query``) as its owner downloads it: the
    response and its rows (header first)."""
    client.force_login(scenario.owner)
    response = client.get(reverse("scenario_csv", args=[scenario.pk, table]), query or {})
    assert response.status_code == 200 and response["Content-Type"] == "text/csv; charset=utf-8"
    return response, list(csv.reader(io.StringIO(response.content.decode())))
