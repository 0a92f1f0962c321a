"""The report through Python: the page parses (Python's html.parser), every figure is
well-formed XML (xml.etree, the standard library's parser), nothing is fetched from outside,
user text is escaped, and the JSON numbers equal the ones from the individual functions."""

import json
import xml.etree.ElementTree as ET
from html.parser import HTMLParser

import pytest

import trajweave as tw

EVIL = "<script>alert('x')</script>"


class Tags(HTMLParser):
    def __init__(self):
        super().__init__()
        self.tags, self.open = [], []

    def handle_starttag(self, tag, attrs):
        self.tags.append((tag, dict(attrs)))


def svgs(html):
    out, start = [], 0
    while (i := html.find("<svg", start)) >= 0:
        j = html.index("</svg>", i) + len("</svg>")
        out.append(html[i:j])
        start = j
    return out


@pytest.fixture(scope="module")
def built(tmp_path_factory):
    df = tw.simulate(subjects=200, seed=12)
    df[EVIL] = df["age"]
    p = tw.Panel.from_frame(df, "patient", "years", "egfr", ["age", "diabetes", EVIL])
    path = tmp_path_factory.mktemp("report") / "r.html"
    numbers = tw.report(p, path, bootstrap_reps=20, time_unit="years")
    return p, path.read_text(encoding="utf-8"), numbers, json.loads(path.with_suffix(".json").read_text())


def test_page_parses_and_figures_are_well_formed(built):
    _, html, _, _ = built
    parser = Tags()
    parser.feed(html)
    assert html.startswith("<!DOCTYPE html>")
    figures = svgs(html)
    assert len(figures) >= 9
    for svg in figures:
        ET.fromstring(svg)  # raises on any malformed figure
    # Self-contained: no script elements, nothing loaded from elsewhere.
    assert not [t for t, _ in parser.tags if t == "script"]
    for _, attrs in parser.tags:
        for key in ("src", "href"):
            assert not str(attrs.get(key, "")).startswith(("http:", "https:", "//"))


def test_user_text_is_escaped(built):
    _, html, _, _ = built
    assert EVIL not in html
    assert "&lt;script&gt;alert" in html


def test_numbers_equal_the_individual_functions(built):
    p, _, numbers, on_disk = built
    assert numbers.to_dict() == on_disk
    d = tw.describe(p)
    overview = on_disk["sections"]["overview"]
    assert overview["subjects"] == d.subjects
    assert overview["observations"] == d.observations
    assert overview["follow_up"] == d.to_dict()["follow_up"]


def test_options_are_checked(tmp_path):
    p = tw.Panel.from_frame(tw.simulate(subjects=50, seed=1), "patient", "years", "egfr")
    with pytest.raises(tw.InvalidOptionError, match="bootstrap_reps"):
        tw.report(p, tmp_path / "x.html", bootstrap_reps=5)
    with pytest.raises(tw.InvalidOptionError, match="no_such"):
        tw.report(p, tmp_path / "x.html", no_such=1)
