"""The HTML report: it parses, is self-contained, embeds every plot, lists every method."""

from __future__ import annotations

import base64
import re
from html.parser import HTMLParser
from pathlib import Path

import pandas as pd
import pytest

pytest.importorskip("matplotlib")

from estimator.cautions import CAUTION  # noqa: E402
from estimator.comparison import compare_lots  # noqa: E402
from estimator.profiles.io import read_profile  # noqa: E402
from estimator.report import html as report  # noqa: E402
from estimator.report.plots import comparison_figures  # noqa: E402

ROOT = Path(__file__).resolve().parents[2]
LOTS = ROOT / "data" / "demo" / "lots.csv"
VOID = {"meta", "img", "br", "hr", "link", "input"}


class _Collector(HTMLParser):
    """Collects tags, image sources, text, and checks that elements nest properly."""

    def __init__(self) -> None:
        super().__init__()
        self.stack: list[str] = []
        self.errors: list[str] = []
        self.images: list[dict] = []
        self.ids: list[str] = []
        self.links: list[str] = []
        self.tags: list[str] = []
        self.text: list[str] = []

    def handle_starttag(self, tag, attrs):
        a = dict(attrs)
        self.tags.append(tag)
        if "id" in a:
            self.ids.append(a["id"])
        if tag == "img":
            self.images.append(a)
        if tag == "a" and "href" in a:
            self.links.append(a["href"])
        if tag not in VOID:
            self.stack.append(tag)

    def handle_endtag(self, tag):
        if tag in VOID:
            return
        if not self.stack or self.stack[-1] != tag:
            self.errors.append(f"unexpected </{tag}> (open: {self.stack[-3:]})")
            return
        self.stack.pop()

    def handle_data(self, data):
        self.text.append(data)


def _parse(text: str) -> _Collector:
    parser = _Collector()
    parser.feed(text)
    parser.close()
    return parser


@pytest.fixture(scope="module")
def demo():
    # the invented demo lots (data/demo/README.md)
    comparison = compare_lots(read_profile(LOTS, basis="fatty-acid"), climate_class="C")
    plots = comparison_figures(comparison)
    sections = report.comparison_sections(comparison, plots)
    return comparison, plots, sections, report.render_report("Offered lots compared", sections)


def _words(text: str) -> str:
    return " ".join("".join(_parse(text).text).split())


def test_section_anchor_comes_from_its_title():
    assert report.Section("Methods and citations", "").anchor == "methods-and-citations"
    assert report.Section("X", "", id="custom").anchor == "custom"


def test_a_report_of_custom_sections_parses_and_links_its_contents(tmp_path):
    # how the blend and fit jobs will add their own sections
    sections = [report.Section("Blend results", report.paragraph("B20 <estimate>")),
                report.Section("Blend results", report.bullet_list(["one", "two"]))]
    path = report.build_report("Blends", sections, tmp_path / "r.html", subtitle="demo")
    doc = _parse(path.read_text(encoding="utf-8"))
    assert doc.errors == [] and doc.stack == []
    assert len(set(doc.ids)) == len(doc.ids) == 2  # repeated titles get distinct anchors
    assert sorted(doc.links) == sorted(f"#{i}" for i in doc.ids)
    assert "B20 <estimate>" in "".join(doc.text)  # escaped, not markup
    assert CAUTION in " ".join("".join(doc.text).split())


def test_table_cells_are_escaped_and_verdicts_shaded():
    frame = pd.DataFrame({"lot": ["<b>x</b>"], "EN 14214": ["fails (iodine value)"],
                          "cost": [1234.4]})
    text = report.table_html(frame, verdict_columns=["EN 14214"], formats={"cost": ",.0f"})
    assert "&lt;b&gt;x&lt;/b&gt;" in text
    assert '<td class="v-fails">fails (iodine value)</td>' in text
    assert '<td class="nw num">1,234</td>' in text


def test_comparison_report_parses_and_is_self_contained(demo, tmp_path):
    _, _, sections, rendered = demo
    path = report.build_report("Offered lots compared", sections, tmp_path / "report.html")
    text = path.read_text(encoding="utf-8")
    assert text == rendered
    doc = _parse(text)
    assert doc.errors == [] and doc.stack == []
    assert not re.search(r'(src|href)="(https?:)?//', text)  # nothing fetched from outside
    assert "<script" not in text and "<link" not in text


def test_comparison_report_embeds_every_plot(demo, tmp_path):
    _, plots, _, text = demo
    images = _parse(text).images
    assert len(images) == len(plots) >= 6
    for img, plot in zip(images, plots):
        head, data = img["src"].split(",", 1)
        assert head == "data:image/png;base64"
        assert base64.b64decode(data)[:8] == b"\x89PNG\r\n\x1a\n"
        assert img["alt"] == plot.caption


def test_comparison_report_lists_every_method_used_with_its_citation(demo):
    comparison, _, _, rendered = demo
    text = _words(rendered)
    used = comparison.estimates[["property", "method"]].drop_duplicates()
    assert len(used) == len(comparison.methods)
    for prop, method in zip(used["property"], used["method"]):
        assert method in text and prop in text
    for citation in comparison.methods["citation"]:
        assert " ".join(citation.split()) in text


def test_comparison_report_shows_flags_assumptions_limits_and_cautions(demo):
    comparison, _, sections, rendered = demo
    titles = [s.title for s in sections]
    assert titles == ["Summary", "Ranking", "Charts", "Verdict details", "Lot valuation",
                      "Assumptions", "Methods and citations", "Out-of-domain flags",
                      "Specification limits", "Cautions"]
    text = _words(rendered)
    for reason in comparison.flags["reason"]:
        assert reason in text
    for assumption in comparison.assumptions["assumption"]:
        assert assumption in text
    assert "MEMORY" in text and "EN 14214:2012+A2:2019" in text
    assert text.count(CAUTION) >= 2  # top and bottom of the page


def test_write_comparison_writes_tables_plots_and_report(demo, tmp_path):
    comparison, plots, _, _ = demo
    written = report.write_comparison(comparison, tmp_path / "out", plots=plots)
    csv = pd.read_csv(written["csv"])
    assert list(csv["sample"]) == list(comparison.ranked["sample"])
    assert csv["caution"].str.startswith("Estimates, not certification").all()
    sheets = pd.read_excel(written["xlsx"], sheet_name=None)
    assert set(sheets) == {"table", "verdicts", "valuation", "assumptions", "methods",
                           "limits", "flags", "cautions"}
    assert len(written["plots"]) == 2 * len(plots)
    assert {p.suffix for p in written["plots"]} == {".png", ".svg"}
    assert written["report"].name == "report.html"
