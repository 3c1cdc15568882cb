"""The whole-scenario report: every part written, one HTML holding them, the fit report linked."""

from __future__ import annotations

import json
from html.parser import HTMLParser
from pathlib import Path

from click.testing import CliRunner

from estimator.cli import cli

DEMO = Path(__file__).resolve().parents[2] / "data" / "demo"


class _Collect(HTMLParser):
    def __init__(self):
        super().__init__()
        self.h2, self.links, self.images, self._in_h2 = [], [], 0, False
        self.folds, self._in_fold = [], False

    def handle_starttag(self, tag, attrs):
        attrs = dict(attrs)
        if tag in ("h2", "h3"):
            self._in_h2 = True
            self.h2.append("")
        if tag == "summary":
            self._in_fold = True
            self.folds.append("")
        if tag == "a" and attrs.get("href"):
            self.links.append(attrs["href"])
        if tag == "img" and str(attrs.get("src", "")).startswith("data:image/png;base64,"):
            self.images += 1

    def handle_endtag(self, tag):
        if tag in ("h2", "h3"):
            self._in_h2 = False
        if tag == "summary":
            self._in_fold = False

    def handle_data(self, data):
        if self._in_h2:
            self.h2[-1] += data
        if self._in_fold and not self.folds[-1]:
            self.folds[-1] += data


def test_report_command_writes_one_report_with_every_part(tmp_path):
    data = json.loads((DEMO / "scenario.json").read_text())
    data["lab"]["properties"] = ["cetane_number"]  # one property keeps the test quick
    for part, key in (("lots", "file"), ("blend", "diesel"), ("lab", "file")):
        data[part][key] = str(DEMO / data[part][key])
    scenario = tmp_path / "scenario.json"
    scenario.write_text(json.dumps(data))
    out = tmp_path / "out"
    result = CliRunner().invoke(cli, ["report", str(scenario), "-o", str(out)])
    assert result.exit_code == 0, result.output
    for name in ("report.html", "comparison.csv", "comparison.xlsx", "blend.xlsx", "mix.xlsx",
                 "lab_model.json", "estimates_with_lab_model.csv",
                 "lab_model_fit_report/report.html", "plots/blend_curves.png",
                 "plots/mix_shares.png"):
        assert (out / name).exists(), name
    parser = _Collect()
    parser.feed((out / "report.html").read_text(encoding="utf-8"))
    assert {"Ranking", "Blend curves", "Lots and shares", "Refit on the lab's own samples",
            "Cautions"} <= set(parser.h2)
    # the summary first, then the details folded in the order of its decisions
    assert parser.h2[:6] == ["Summary", "Lots, best first", "Least-cost mix",
                             "Highest blend level per target", "What the lab's model changed",
                             "Cautions"]
    assert [f.strip() for f in parser.folds] == [
        "Lots: ranking, verdicts and costs", "Least-cost mix", "Blending with diesel",
        "The lab's own model", "Methods, limits and sources", "Cautions"]
    assert not list((out / "plots").glob("*.svg"))  # SVG copies only with --svg
    assert "lab_model_fit_report/report.html" in parser.links
    assert parser.images >= 6
    assert "Estimates, not certification" in result.output
