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
from estimator.report.labels import column_label, for_readers, method_name  # noqa: E402
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


def test_comparison_report_lists_every_method_used_by_its_author_year_citation(demo):
    comparison, _, _, rendered = demo
    text = _words(rendered)
    used = comparison.estimates[["property", "method"]].drop_duplicates()
    assert len(used) == len(comparison.methods)
    for prop, method in zip(used["property"], used["method"]):
        assert method_name(method) in text and column_label(prop, unit=False) in text
    for citation in comparison.methods["citation"]:
        assert " ".join(for_readers(citation).split()) in text


def test_comparison_report_shows_flags_assumptions_limits_and_cautions(demo):
    comparison, _, sections, rendered = demo
    titles = [s.title for s in sections]
    assert titles == ["Summary", "Ranking", "Charts", "Verdict details", "Lot valuation",
                      "Assumptions", "Methods and citations", "Out-of-domain flags",
                      "Specification limits", "Cautions"]
    text = _words(rendered)
    for reason in comparison.flags["reason"]:
        assert for_readers(reason) in text
    for assumption in comparison.assumptions["assumption"]:
        assert assumption in text
    assert "recalled, not yet checked against the standard" in text
    assert "EN 14214:2012+A2:2019" in text
    assert text.count(CAUTION) >= 2  # top and bottom of the page


def test_report_shows_readers_no_method_keys_marks_note_files_or_machine_names(demo):
    comparison, _, _, rendered = demo
    text = _words(rendered)
    keys = set(comparison.methods["method"]) - {"composition", "stoichiometric"}
    for word in [*keys, "MEMORY", "VERIFIED", "DERIVED", "standards.md", "correlations.md",
                 "[S1]", "cfpp_C", "iodine_value_gI2_100g", "cost_per_t_fuel",
                 "water_hydrolysis_max_loss_t_per_t_oil", "highs", "linprog"]:
        assert word not in text, word
    assert not re.search(r"\b[a-z]+_[a-z0-9_]+\b", text), re.findall(r"\b[a-z]+_[a-z0-9_]+\b",
                                                                        text)[:5]
    assert ">=" not in text and "<=" not in text  # one symbol: ≥ and ≤


def test_report_opens_with_the_decisions_and_folds_the_details(demo):
    _, _, _, rendered = demo
    lead = rendered[rendered.index('<div class="lead">'):rendered.index("<details")]
    assert "Lots, best first" in lead and "why it fails or is in doubt" in lead
    assert "LOT-R1" in lead and "oxidation stability 110 °C" in lead
    assert "<img" not in lead  # charts come later, folded
    folded = [f.strip() for f in re.findall(r"<details[^>]*><summary>([^<]+)", rendered)]
    assert folded == ["Lots: ranking, verdicts and costs", "Methods, limits and sources",
                      "Cautions"]
    assert "@media print" in rendered and "size:A4" in rendered


def test_every_table_scrolls_inside_its_section(demo):
    _, _, _, rendered = demo
    assert rendered.count("<table") == rendered.count('<div class="scroll"><table')
    assert ".scroll{overflow-x:auto" in rendered


def test_chart_captions_name_only_the_specifications_that_limit_the_property(demo):
    _, plots, _, _ = demo
    captions = {p.name: p.caption for p in plots}
    # ASTM D6751 limits neither CFPP nor iodine value (ASTM D6751-09 Table 1)
    for name in ("property_cfpp_C", "property_iodine_value_gI2_100g"):
        assert "EN 14214" in captions[name] and "ASTM D6751" not in captions[name]
    assert "EN 14214 and ASTM D6751" in captions["property_cetane_number"]


def test_write_comparison_writes_tables_plots_and_report(demo, tmp_path):
    comparison, plots, _, _ = demo
    written = report.write_comparison(comparison, tmp_path / "out", plots=plots)
    csv = pd.read_csv(written["csv"])
    assert list(csv["sample"]) == list(comparison.ranked["sample"])
    assert csv["caution"].str.startswith("Estimates, not certification").all()
    sheets = pd.read_excel(written["xlsx"], sheet_name=None)
    assert set(sheets) == {"table", "verdicts", "valuation", "assumptions", "methods",
                           "limits", "flags", "cautions"}
    assert len(written["plots"]) == len(plots)  # SVG copies only on request
    assert {p.suffix for p in written["plots"]} == {".png"}
    assert written["report"].name == "report.html"
    # the report embeds the very PNG written to plots/ (each figure drawn once)
    html_text = written["report"].read_text(encoding="utf-8")
    first = base64.b64encode(written["plots"][0].read_bytes()).decode("ascii")
    assert first in html_text


def test_write_comparison_draws_each_figure_once_and_svg_on_request(demo, tmp_path,
                                                                     monkeypatch):
    from matplotlib.backends.backend_agg import FigureCanvasAgg
    from matplotlib.figure import Figure

    comparison, plots, _, _ = demo
    for p in plots:  # drop any PNG kept by an earlier test
        p.figure.__dict__.pop("_fame_png", None)
    draws: list[int] = []
    svgs: list[int] = []
    agg_draw, savefig = FigureCanvasAgg.draw, Figure.savefig

    def counting_draw(self, *args, **kwargs):
        draws.append(id(self.figure))
        return agg_draw(self, *args, **kwargs)

    def counting_savefig(self, fname, *args, **kwargs):
        if kwargs.get("format") == "svg":
            svgs.append(id(self))
        return savefig(self, fname, *args, **kwargs)

    monkeypatch.setattr(FigureCanvasAgg, "draw", counting_draw)
    monkeypatch.setattr(Figure, "savefig", counting_savefig)
    monkeypatch.setenv("FAME_ESTIMATOR_WORKERS", "1")  # count the draws in this process
    written = report.write_comparison(comparison, tmp_path / "out", plots=plots, svg=True)
    assert sorted(draws) == sorted(id(p.figure) for p in plots)  # one raster each
    assert sorted(svgs) == sorted(id(p.figure) for p in plots)
    assert {p.suffix for p in written["plots"]} == {".png", ".svg"}
