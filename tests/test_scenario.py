"""Planning scenarios: reading and validating the JSON file, running every part."""

from __future__ import annotations

import json
from pathlib import Path

import pytest

from estimator.errors import EstimatorError
from estimator.scenario import read_scenario, run_scenario

DEMO = Path(__file__).resolve().parents[1] / "data" / "demo"


def scenario_file(tmp_path: Path, data: dict) -> Path:
    path = tmp_path / "scenario.json"
    path.write_text(json.dumps(data), encoding="utf-8")
    return path


def test_unknown_key_is_refused_with_the_known_ones(tmp_path):
    path = scenario_file(tmp_path, {"lots": {"file": "x.csv", "climate": "C"}})
    with pytest.raises(EstimatorError) as err:
        read_scenario(path)
    assert str(err.value) == (
        "scenario.json: unknown key 'climate' in 'lots'; known: basis, climate_class, file, "
        "fractions, methanol_ratio, pretreat, specs, sum_tolerance"
    )


def test_lots_part_is_required(tmp_path):
    with pytest.raises(EstimatorError) as err:
        read_scenario(scenario_file(tmp_path, {"blend": {"diesel": "en590-winter"}}))
    assert str(err.value) == "scenario.json: 'lots' must be an object with at least a 'file'"


def test_blend_needs_a_diesel(tmp_path):
    path = scenario_file(tmp_path, {"lots": {"file": "x.csv"}, "blend": {"levels": [0, 7]}})
    with pytest.raises(EstimatorError, match="'blend' needs a 'diesel'"):
        read_scenario(path)


def test_paths_are_relative_to_the_scenario_file():
    scenario = read_scenario(DEMO / "scenario.json")
    assert scenario.resolve(scenario.lots["file"]) == DEMO / "lots.csv"


def test_demo_scenario_runs_compare_blend_and_mix(tmp_path, monkeypatch):
    from estimator.properties import methods

    # the invented demo lots meet EN 14214 at CFPP -5 with Park's Rancimat form; with the
    # default park2008_bape the best mix misses 8 h by 0.14 h (regression setting)
    monkeypatch.setitem(methods.DEFAULTS, "oxidation_stability_110C_h", "park2008")
    data = json.loads((DEMO / "scenario.json").read_text())
    data.pop("lab")
    data.pop("model")
    data["mix"]["margin_bands"] = 0  # regression setting: the mix may sit on its limits
    data["costs"] = str(DEMO / data["costs"])
    for part in ("lots", "blend"):
        key = "file" if part == "lots" else "diesel"
        data[part][key] = str(DEMO / data[part][key])
    result = run_scenario(read_scenario(scenario_file(tmp_path, data), allow_outside=True))
    assert len(result.comparison.ranked) == 7
    assert result.comparison.costs.source == "costs.json"
    # EN 590 allows at most B7 (standards.md 3.3) and admits only EN 14214 FAME: each lot's
    # EN 590 answer is a level up to B7 or says the FAME fails EN 14214
    summary = result.blend["summary"].set_index("sample")["EN 590"]
    for lot, cell in summary.items():
        assert cell.startswith("B") or cell.startswith("FAME fails EN 14214"), (lot, cell)
        if cell.startswith("B"):
            assert float(cell[1:].split()[0].rstrip(":")) <= 7.0
    assert summary["LOT-S1"].startswith("FAME fails EN 14214 (iodine value")
    assert result.mix.feasible
    assert result.mix.cost_per_t_fuel > 0


def test_an_error_inside_a_part_names_the_scenario_file_and_part(tmp_path):
    path = scenario_file(tmp_path, {"lots": {"file": str(DEMO / "lots.csv")},
                                    "blend": {"diesel": "en590-winter", "levels": [0, 500]}})
    with pytest.raises(EstimatorError) as err:
        run_scenario(read_scenario(path, allow_outside=True))
    assert str(err.value) == "scenario.json: 'blend': levels: 500 is outside 0-100 % v/v"


def test_a_scenario_model_of_lab_drives_the_ranking_with_the_labs_fit(tmp_path):
    data = json.loads((DEMO / "scenario.json").read_text())
    data["lab"]["properties"] = ["oxidation_stability_110C_h"]
    data.pop("blend")
    data.pop("mix")
    for part, key in (("lots", "file"), ("lab", "file")):
        data[part][key] = str(DEMO / data[part][key])
    data["costs"] = str(DEMO / data["costs"])
    result = run_scenario(read_scenario(scenario_file(tmp_path, data), allow_outside=True))
    assert list(result.model_properties) == ["oxidation_stability_110C_h"]
    os_rows = result.comparison.verdicts[
        result.comparison.verdicts["property"] == "oxidation_stability_110C_h"]
    assert all(str(m).startswith("fit:") for m in os_rows["method"])
    assert len(result.fits) == 1  # the lab part ran once, first


@pytest.mark.parametrize("data, message", [
    ({"lots": {"file": "x.csv"}, "model": "lab"}, "'model' is \"lab\" but there is no 'lab'"),
    ({"lots": {"file": "x.csv"}, "model": 5}, "'model' must be \"lab\", a model file name"),
    ({"lots": {"file": "x.csv"}, "costs": 5}, "'costs' must be the name of a costs JSON file"),
])
def test_bad_model_or_costs_keys_get_one_line(tmp_path, data, message):
    with pytest.raises(EstimatorError) as err:
        read_scenario(scenario_file(tmp_path, data))
    assert message in str(err.value)
