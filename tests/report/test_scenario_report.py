"""The whole-scenario report: every part written, one HTML holding them, the fit report linked."""

from __future__ import annotations

import json
from html.parser import HTMLParser
from pathlib import Path

import pandas as pd
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
    data["costs"] = str(DEMO / data["costs"])
    scenario = tmp_path / "scenario.json"
    scenario.write_text(json.dumps(data))
    out = tmp_path / "out"
    result = CliRunner().invoke(cli, ["report", str(scenario), "-o", str(out),
                                        "--allow-outside"])
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
    # the summary names what the mix is held inside, and by what margin; the lab's cetane
    # model was not fitted on a mix this rich in C20:1, so its cetane number cannot decide
    spec = {"astm-d6751": "ASTM D6751", "en14214": "EN 14214"}[data["mix"]["spec"]]
    html_text = (out / "report.html").read_text(encoding="utf-8").replace("&#x27;", "'")
    limits = pd.read_excel(out / "mix.xlsx", sheet_name="limits").set_index("property")
    assert not limits.loc["cetane_number", "in_domain"]
    assert f"It is held inside every {spec} limit" not in html_text
    assert f"It is held inside the {spec} limits on viscosity 40 °C" in html_text
    assert f"each by at least {data['mix']['margin_bands']:g} stated errors" in html_text
    assert (f"cannot decide whether the mix meets {spec} on cetane number; a laboratory "
            "test by the standard method decides") in html_text


def test_report_takes_a_lab_model_and_says_which_properties_came_from_it(tmp_path):
    import numpy as np
    import pandas as pd

    from estimator.profiles.profile import Profile
    from estimator.refit import file_provenance, fit_property, save_models

    # an invented lab whose Rancimat times are all about 2 h (synthetic, for the test)
    base = Profile.from_oils(["rapeseed", "soybean", "palm", "beef-tallow", "sunflower"])
    rng = np.random.default_rng(1)
    n_species = base.wt_pct.shape[1]
    w = base.wt_pct[rng.integers(0, len(base), 20)] * np.exp(rng.normal(0, 0.15, (20, n_species)))
    w = 100.0 * w / w.sum(axis=1, keepdims=True)
    ids = [f"L{i}" for i in range(20)]
    lab = Profile.from_frame(
        pd.DataFrame(w, index=ids, columns=base.composition.columns),
        metadata=pd.DataFrame({"oxidation_stability_110C_h": 2.0 + rng.normal(0, 0.1, 20)},
                              index=ids), source="lab.csv")
    training = tmp_path / "lab.csv"
    training.write_text("invented\n", encoding="utf-8")
    model = save_models([fit_property(lab, "oxidation_stability_110C_h", kinds=("ridge",)).model],
                        tmp_path / "os_model.json", file_provenance(training, 20))
    scenario = tmp_path / "scenario.json"
    scenario.write_text(json.dumps({"lots": {"file": str(DEMO / "lots.csv"),
                                             "basis": "fatty-acid"}}))
    out = tmp_path / "out"
    result = CliRunner().invoke(cli, ["report", str(scenario), "--model", str(model),
                                      "--allow-outside", "-o", str(out)])
    assert result.exit_code == 0, result.output
    assert "From the lab's model, replacing the published estimates" in result.stdout
    assert "oxidation stability" in result.stdout.split("From the lab's model")[1]
    html = (out / "report.html").read_text(encoding="utf-8")
    assert "From the lab&#x27;s model" in html or "From the lab's model" in html
    ranked = pd.read_csv(out / "comparison.csv")
    assert (ranked["oxidation_stability_110C_h"] < 4).all()
