"""Diesel descriptions (estimator/diesel.py): only what the question needs, unit slips named."""

from __future__ import annotations

import json

import pytest

from estimator.diesel import PLAUSIBLE_RANGES, load_diesel, needed_properties, read_diesel
from estimator.errors import InputFileError


def _write(tmp_path, data, name="d.json"):
    path = tmp_path / name
    path.write_text(json.dumps(data))
    return path


def test_builtin_diesels_lie_inside_the_plausible_ranges():
    # the built-in typical diesels are inside EN 590's 820-845 kg/m3 (standards.md 3.3)
    for name in ("en590-summer", "en590-winter"):
        d = load_diesel(name)
        for prop, value in d.values.items():
            lo, hi = PLAUSIBLE_RANGES[prop]
            assert lo <= value <= hi


def test_en590_density_and_viscosity_limits_lie_inside_the_plausible_ranges():
    # EN 590:2022: density 820-845 kg/m3, viscosity 2.0-4.5 mm2/s at 40 °C, cetane >= 51
    # (standards.md 3.3, VERIFIED); arctic classes go lower (800 kg/m3, 1.2 mm2/s)
    lo, hi = PLAUSIBLE_RANGES["density_15C_kg_m3"]
    assert lo <= 800 and hi >= 845
    lo, hi = PLAUSIBLE_RANGES["kin_viscosity_40C_mm2_s"]
    assert lo <= 1.2 and hi >= 4.5
    assert PLAUSIBLE_RANGES["cetane_number"][0] <= 45 <= PLAUSIBLE_RANGES["cetane_number"][1]


def test_only_the_properties_the_question_needs_are_required(tmp_path):
    d = read_diesel(_write(tmp_path, {"cfpp_C": -20}), required=["cfpp_C"])
    assert d.value("cfpp_C") == -20.0
    assert d.value("hhv_MJ_kg") != d.value("hhv_MJ_kg")  # NaN: not given
    assert not d.has("hhv_MJ_kg")


def test_a_cloud_point_question_needs_the_density_for_mole_fractions():
    assert needed_properties(["cloud_point_C", "cfpp_C"]) == [
        "density_15C_kg_m3", "cloud_point_C", "cfpp_C"]
    assert needed_properties(["cetane_number"]) == ["cetane_number"]


@pytest.mark.parametrize("key, value, hint", [
    ("density_15C_kg_m3", 0.828, "looks like g/cm³ (kg/L); give kg/m³"),
    ("kin_viscosity_40C_mm2_s", 2.7e-6, "looks like m²/s; give mm²/s"),
    ("kin_viscosity_40C_mm2_s", 2700, "looks like the wrong unit; give mm²/s"),
    ("hhv_MJ_kg", 45760, "looks like kJ/kg"),
    ("lhv_MJ_kg", 18400, "looks like Btu/lb"),
    ("cloud_point_C", 263.15, "looks like kelvin; give °C (subtract 273.15)"),
    ("cfpp_C", 258, "looks like kelvin"),
])
def test_a_unit_slip_is_named(tmp_path, key, value, hint):
    with pytest.raises(InputFileError) as info:
        read_diesel(_write(tmp_path, {key: value}), required=[])
    assert str(info.value) == f"d.json: {key!r} {value:g} {hint}" or hint in str(info.value)


@pytest.mark.parametrize("data, message", [
    ({"cetane_number": True}, "d.json: key 'cetane_number': not a number: True"),
    ({"cetane_number": -3}, "d.json: 'cetane_number' -3 is outside 30 to 100, the plausible "
                            "range for a diesel"),
    ({"cloud_point_C": 1e308}, "d.json: 'cloud_point_C' 1e+308 is outside -60 to 25 °C"),
    ({"cloud_point_C": 10 ** 400}, "d.json: key 'cloud_point_C': not a number"),
    ({"cfpp_C_error": -1}, "d.json: 'cfpp_C_error' -1 is outside 0 to 85"),
    ({"name": 5}, "d.json: key 'name': not a text: 5"),
])
def test_wrong_types_and_absurd_values_are_refused(tmp_path, data, message):
    path = tmp_path / "d.json"
    path.write_text(json.dumps(data) if not isinstance(data.get("cloud_point_C"), int)
                    else '{"cloud_point_C": ' + "9" * 400 + "}")
    with pytest.raises(InputFileError) as info:
        read_diesel(path, required=[])
    assert str(info.value).startswith(message)


def test_a_csv_certificate_with_text_true_is_refused(tmp_path):
    path = tmp_path / "d.csv"
    path.write_text("cetane_number,cfpp_C\ntrue,-20\n")
    with pytest.raises(InputFileError, match=r"^d\.csv: key 'cetane_number': not a number"):
        read_diesel(path, required=["cfpp_C"])
