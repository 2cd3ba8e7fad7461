"""The HTML report: self-contained, escaped, with the caution, units and four charts."""

from __future__ import annotations

import html
import re
from html.parser import HTMLParser

import pytest

import coveryield
from coveryield.cli import main
from coveryield.comparison import CAUTION
from coveryield.report_html import render_report

from .conftest import DEMO, write_one_zone_plan

# The only addresses an inline SVG may carry: its namespace declarations (SVG 1.1, W3C).
SVG_NAMESPACES = {"http://www.w3.org/2000/svg", "http://www.w3.org/1999/xlink"}


@pytest.fixture(scope="module")
def demo_page(demo_result):
    return render_report(demo_result)


def test_caution_at_top_and_at_the_end(demo_page):
    caution = html.escape(CAUTION)
    first, last = demo_page.find(caution), demo_page.rfind(caution)
    assert first != -1
    assert last > first
    assert first < demo_page.find("<table")
    assert last > demo_page.rfind("</table>")


def test_every_plan_zone_and_catchment_name_is_shown(demo_result, demo_page):
    for name in demo_result.plan_names + demo_result.zone_names:
        assert html.escape(name) in demo_page
    assert html.escape(demo_result.plan_file.catchment.name) in demo_page
    assert "young-pine" in demo_page
    assert "riparian-natives" in demo_page


def test_units_are_in_the_headers(demo_page):
    for unit in ("mm/yr", "ML/yr", "m³/s", "mm/month", "km²", "%"):
        assert unit in demo_page
    # axis labels carry their units too
    assert "water yield [mm/yr over the catchment]" in demo_page
    assert "streamflow [m³/s], log scale" in demo_page
    assert "change against current [mm/yr]" in demo_page


def test_four_inline_svg_charts(demo_page):
    assert demo_page.count("<svg") == 4
    assert demo_page.count("</svg>") == 4
    assert "<?xml" not in demo_page
    assert "<!DOCTYPE svg" not in demo_page


def test_no_external_references(demo_page):
    addresses = set(re.findall(r"""https?://[^"'\s)<>]*""", demo_page))
    assert addresses <= SVG_NAMESPACES
    # every address that remains sits in an xmlns declaration
    outside = re.sub(r'xmlns(:\w+)?="[^"]*"', "", demo_page)
    assert "http://" not in outside
    assert "https://" not in outside
    for tag in ("<script", "<link", "<img", "@import", "@font-face"):
        assert tag not in demo_page


def test_the_page_parses_and_tags_balance(demo_page):
    # html.parser is lenient; count open/close of the block elements we write ourselves
    class Counter(HTMLParser):
        def __init__(self):
            super().__init__()
            self.depth = {}

        def handle_starttag(self, tag, attrs):
            self.depth[tag] = self.depth.get(tag, 0) + 1

        def handle_endtag(self, tag):
            self.depth[tag] = self.depth.get(tag, 0) - 1

    counter = Counter()
    counter.feed(demo_page)
    for tag in ("table", "tr", "figure", "svg", "p", "body", "html"):
        assert counter.depth.get(tag, 0) == 0, tag


def test_headline_figures_match_the_comparison(demo_result, demo_page):
    o = demo_result.outcome("plant-upper")
    change = demo_result.change(o)
    assert f"{o.mean_yield_mm:,.0f}" in demo_page
    assert f"{o.mean_yield_ml:,.0f}" in demo_page
    # negative changes use the typographic minus sign
    assert f"\u2212{abs(change.yield_ml):,.0f}" in demo_page


def test_names_from_the_plan_file_are_escaped(tmp_path):
    plan = write_one_zone_plan(tmp_path)
    text = plan.read_text()
    text = text.replace('name = "Test Run"', 'name = "Creek <script>alert(1)</script> & Co"')
    text = text.replace('name = "all"', 'name = "<b>x</b>"').replace("\nall = ", '\n"<b>x</b>" = ')
    text = text.replace("[plans.forest-50]", '[plans."50% <i>forest</i>"]')
    plan.write_text(text)
    result = coveryield.compare(plan)
    page = render_report(result)
    assert "<script" not in page
    assert "<b>x</b>" not in page
    assert "&lt;b&gt;x&lt;/b&gt;" in page
    assert "<i>forest</i>" not in page
    assert "50% &lt;i&gt;forest&lt;/i&gt;" in page
    assert "Creek &lt;script&gt;alert(1)&lt;/script&gt; &amp; Co" in page
    assert page.count("<svg") == 4


def test_compare_command_writes_the_report(tmp_path, capsys):
    out = tmp_path / "results"
    assert main(["compare", str(DEMO / "plans.toml"), "--out", str(out)]) == 0
    capsys.readouterr()
    page = (out / "report.html").read_text(encoding="utf-8")
    assert page.startswith("<!DOCTYPE html>")
    assert html.escape(CAUTION) in page
    assert page.count("<svg") == 4
    assert "report.html" in (out / "README.txt").read_text()
