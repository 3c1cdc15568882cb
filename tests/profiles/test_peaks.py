"""Reading GC peak tables: identification, response factors, internal standard, errors."""

from __future__ import annotations

import importlib.util
from pathlib import Path

import numpy as np
import pandas as pd
import pytest

from estimator.errors import InputFileError, ProfileError, UnknownSpeciesError
from estimator.profiles.peaks import read_peak_table, read_peaks, read_reference

ROOT = Path(__file__).resolve().parents[2]
EXAMPLES = ROOT / "data" / "examples"


def _maker():
    spec = importlib.util.spec_from_file_location(
        "make_peak_examples", ROOT / "scripts" / "make_peak_examples.py")
    module = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(module)
    return module


MAKER = _maker()


def _write(path: Path, frame: pd.DataFrame) -> Path:
    frame.to_csv(path, index=False)
    return path


@pytest.fixture
def reference(tmp_path) -> Path:
    return _write(tmp_path / "ref.csv", MAKER.reference_run())


def _random_profile(rng) -> dict[str, float]:
    # every natural oil or fat carries palmitate and stearate (common practice); the rest
    # is drawn at random from the esters of the invented reference mixture
    pool = [k for k in MAKER.ECL if k not in ("C19:0", "C16:0", "C18:0")]
    keys = ["C16:0", "C18:0", *rng.choice(pool, size=int(rng.integers(1, 12)), replace=False)]
    wt = rng.dirichlet(np.full(len(keys), 0.7)) * 100.0
    return dict(zip(keys, wt))


@pytest.mark.parametrize("ecl_method", ["miwa1960", "vandendool1963"])
@pytest.mark.parametrize("seed", range(6))
def test_synthesised_run_reads_back_to_its_profile_and_ester_content(
        tmp_path, reference, seed, ecl_method):
    # A run made by scripts/make_peak_examples.py from a known profile: FID response by the
    # theoretical factors, C19:0 internal standard, solvent, retention drift, a contaminant
    # and a late peak, 0.02 % area noise. Read back within 0.1 wt % per species (issue 14).
    rng = np.random.default_rng(1000 + seed)
    wt = _random_profile(rng)
    ester = float(rng.uniform(90.0, 99.5))
    mass_mg, is_mg = float(rng.uniform(80, 260)), float(rng.uniform(10, 60))
    table, truth = MAKER.synthesise_run("lot", wt, ester_content_wt_pct=ester,
                                        sample_mass_mg=mass_mg, internal_standard_mg=is_mg,
                                        rng=rng, area_noise=2e-4)
    peaks = _write(tmp_path / "peaks.csv", table)
    sheet = _write(tmp_path / "sheet.csv", pd.DataFrame({
        "sample": ["lot"], "sample_mass_mg": [mass_mg], "internal_standard_mg": [is_mg]}))
    result = read_peaks(peaks, reference, samples=sheet, ecl_method=ecl_method)
    got = result.profile.composition.loc["lot"]
    for key, value in wt.items():
        assert got[key] == pytest.approx(value, abs=0.1), key
    assert got.drop(list(wt)).abs().max() < 0.1
    assert "C19:0" not in got.index  # the internal standard is not a profile species
    content = result.content.set_index("sample").loc["lot"]
    # EN 14103 on the noise-free areas the script made (areas as measured)
    assert content["ester_content_wt_pct"] == pytest.approx(
        truth["expected_en14103_wt_pct"], abs=0.1)


def test_example_runs_read_back_to_the_invented_lots():
    # data/examples made by scripts/make_peak_examples.py (demo noise 0.05 %)
    result = read_peaks(EXAMPLES / "peaks_runs.csv", EXAMPLES / "peaks_reference.csv",
                        samples=EXAMPLES / "peaks_samples.csv")
    for sample, (profile, _ester) in MAKER.LOTS.items():
        total = sum(profile.values())
        got = result.profile.composition.loc[sample]
        for key, value in profile.items():
            assert got[key] == pytest.approx(100.0 * value / total, abs=0.1), (sample, key)
    assert result.content["ester_content_wt_pct"].notna().all()
    assert "theoretical FID correction factors" in result.response_factors


def _ref(tmp_path, rows) -> Path:
    return _write(tmp_path / "ref.csv", pd.DataFrame(rows, columns=["name",
                                                                    "retention_time_min"]))


SMALL_REF = [("methyl palmitate", 10.0), ("C18:0", 12.0), ("C18:1", 12.3), ("C18:2", 12.7),
             ("methyl nonadecanoate", 13.0), ("C20:0", 14.0)]


def _peaks(tmp_path, rows, name="peaks.csv") -> Path:
    return _write(tmp_path / name, pd.DataFrame(rows, columns=["sample", "retention_time_min",
                                                              "area"]))


def test_peak_outside_every_window_is_reported_unidentified_with_its_time(tmp_path):
    ref = _ref(tmp_path, SMALL_REF)
    peaks = _peaks(tmp_path, [("a", 10.0, 100.0), ("a", 11.31, 7.0), ("a", 12.0, 50.0),
                              ("a", 12.3, 800.0), ("a", 13.0, 200.0)])
    result = read_peaks(peaks, ref)
    ident = result.identification
    row = ident[ident["retention_time_min"] == 11.31].iloc[0]
    assert row["status"] == "unidentified" and row["species"] == ""
    assert "unidentified peak at 11.310 min" in result.content["notes"].iat[0]
    # its area counts as unidentified: 7 of the 957 ester area (internal standard excluded)
    assert result.content["unidentified_area_pct"].iat[0] == pytest.approx(700.0 / 957.0)


def test_reference_with_two_names_at_one_time_is_refused_in_one_line(tmp_path):
    ref = _ref(tmp_path, [("C16:0", 10.0), ("C18:1", 12.3), ("C18:1t", 12.3), ("C18:0", 12.0)])
    with pytest.raises(ProfileError) as err:
        read_reference(ref)
    assert str(err.value) == (
        "ref.csv: rows 3 and 4, column 'retention_time_min': two names ('C18:1', 'C18:1t') "
        "at 12.300 min; one retention time can carry one name")


def test_peak_within_two_reference_windows_is_ambiguous_never_assigned(tmp_path):
    ref = _ref(tmp_path, [*SMALL_REF, ("C18:1t", 12.36)])
    peaks = _peaks(tmp_path, [("a", 10.0, 100.0), ("a", 12.0, 50.0), ("a", 12.33, 800.0),
                              ("a", 13.0, 200.0)])
    result = read_peaks(peaks, ref)
    row = result.identification.query("retention_time_min == 12.33").iloc[0]
    assert row["status"] == "ambiguous" and row["species"] == ""
    assert row["candidates"] == "C18:1 or C18:1t"
    assert result.profile.composition.loc["a", ["C18:1", "C18:1t"]].sum() == 0
    assert "1 ambiguous peak(s) not assigned: 12.330 min (C18:1 or C18:1t)" in \
        result.content["notes"].iat[0]


def test_two_peaks_within_one_window_are_both_ambiguous(tmp_path):
    ref = _ref(tmp_path, SMALL_REF)
    peaks = _peaks(tmp_path, [("a", 10.0, 100.0), ("a", 12.0, 50.0), ("a", 12.28, 500.0),
                              ("a", 12.32, 300.0), ("a", 13.0, 200.0)])
    ident = read_peaks(peaks, ref).identification
    amb = ident[ident["status"] == "ambiguous"]
    assert amb["retention_time_min"].tolist() == [12.28, 12.32]
    assert amb["candidates"].iat[0] == "C18:1 (peaks at 12.280, 12.320 min)"


def test_solvent_peaks_before_the_cutoff_are_dropped_with_a_note(tmp_path):
    ref = _ref(tmp_path, SMALL_REF)
    peaks = _peaks(tmp_path, [("a", 1.2, 1e9), ("a", 10.0, 100.0), ("a", 12.0, 50.0),
                              ("a", 13.0, 200.0)])
    result = read_peaks(peaks, ref)
    assert result.identification["status"].iat[0] == "solvent"
    # default cut-off: half the first reference peak's time, 10.0 / 2
    assert result.content["notes"].iat[0].startswith(
        "1 peak(s) before 5.00 min dropped as solvent")
    # hand: mass ~ area x TCF; TCF(C16:0) = 1, TCF(C18:0) = (298.511/18)/(270.457/16)
    # = 0.98109; C16:0 = 100 / (100 + 50 x 0.98109) = 67.09 wt % (C19:0 excluded)
    assert result.profile.composition.loc["a", "C16:0"] == pytest.approx(67.09, abs=0.01)


def test_retention_drift_is_corrected_through_the_saturated_esters(tmp_path):
    # every peak 0.12 min late (beyond the 0.05 min window): the saturated esters found
    # in both runs carry the reference scale over, and C18:1 is still found
    ref = _ref(tmp_path, SMALL_REF)
    peaks = _peaks(tmp_path, [("a", 10.12, 100.0), ("a", 12.12, 50.0), ("a", 12.42, 800.0),
                              ("a", 13.12, 200.0), ("a", 14.12, 5.0)])
    ident = read_peaks(peaks, ref).identification
    assert ident["species"].tolist() == ["C16:0", "C18:0", "C18:1", "C19:0", "C20:0"]
    assert ident["status"].tolist()[3] == "internal standard"


def test_internal_standard_c17_of_the_2003_edition_is_removed(tmp_path):
    ref = _ref(tmp_path, [("C16:0", 10.0), ("C17:0", 11.0), ("C18:0", 12.0), ("C18:1", 12.3)])
    peaks = _peaks(tmp_path, [("a", 10.0, 100.0), ("a", 11.0, 80.0), ("a", 12.0, 50.0),
                              ("a", 12.3, 800.0)])
    sheet = _write(tmp_path / "m.csv", pd.DataFrame({"sample": ["a"], "sample_mass_mg": [250.0],
                                                     "internal_standard_mg": [20.0]}))
    result = read_peaks(peaks, ref, samples=sheet, internal_standard="C17:0")
    assert result.profile.composition.loc["a", "C17:0"] == 0.0
    content = result.content.iloc[0]
    assert content["method"] == "EN 14103:2003"
    # hand: (1030 - 80) / 80 x 20 / 250 x 100 = 95.0; no C14:0 in the reference, so the
    # window runs from the solvent cut-off
    assert content["ester_content_wt_pct"] == pytest.approx(95.0)


def test_measured_response_factors_replace_the_theoretical_ones(tmp_path):
    ref = _ref(tmp_path, SMALL_REF)
    peaks = _peaks(tmp_path, [("a", 10.0, 100.0), ("a", 12.0, 100.0), ("a", 13.0, 50.0)])
    cal = _write(tmp_path / "cal.csv", pd.DataFrame({"name": ["C16:0", "C18:0"],
                                                     "response_factor": [1.0, 0.5]}))
    result = read_peaks(peaks, ref, calibration=cal)
    # common practice: w_i ~ A_i / RF_i -> 100 : 200 -> 33.33 % and 66.67 %
    assert result.profile.composition.loc["a", "C18:0"] == pytest.approx(200 / 3)
    assert result.response_factors == "measured response factors from cal.csv"
    cal2 = _write(tmp_path / "cal2.csv", pd.DataFrame({"name": ["C16:0"],
                                                       "response_factor": [1.0]}))
    with pytest.raises(ProfileError, match=r"^cal2.csv: no response factor for C18:0 "
                                           r"\(identified in sample 'a'\)"):
        read_peaks(peaks, ref, calibration=cal2)


def test_instrument_spellings_of_the_headers_are_read(tmp_path):
    path = tmp_path / "run7.tsv"
    path.write_text("Peak Name\tRet. Time\tArea\tHeight\tArea %\n"
                    "methyl palmitate\t10,01\t100,5\t40\t33,3\n"
                    "\t12,0\t201\t80\t66,7\n", encoding="utf-8")
    table = read_peak_table(path)
    assert table["sample"].tolist() == ["run7", "run7"]  # no sample column: the file's name
    assert table["retention_time_min"].tolist() == [10.01, 12.0]
    assert table["area"].tolist() == [100.5, 201.0]
    assert table["name"].tolist() == ["methyl palmitate", ""]


def test_xlsx_peak_table_with_rt_and_area_headers(tmp_path):
    path = tmp_path / "runs.xlsx"
    pd.DataFrame({"Sample": ["a", "a"], "RT (min)": [10.0, 12.0],
                  "Area [pA*s]": [1.0, 2.0]}).to_excel(path, index=False)
    table = read_peak_table(path)
    assert table[["sample", "retention_time_min", "area"]].values.tolist() == [
        ["a", 10.0, 1.0], ["a", 12.0, 2.0]]


@pytest.mark.parametrize(("text", "error", "message"), [
    ("sample,retention_time_min,area\na,10.0,100\na,12.0,abc\n", ProfileError,
     "peaks.csv: row 3, column 'area': 'abc' is not a number"),
    ("sample,retention_time_min,area\na,10.0,100\na,12.0,-4\n", ProfileError,
     "peaks.csv: row 3, column 'area': negative value -4"),
    ("sample,retention_time_min,area\na,,100\n", ProfileError,
     "peaks.csv: row 2, column 'retention_time_min': empty cell"),
    ("sample,time_of_day,area\na,10.0,100\n", InputFileError,
     "peaks.csv: no retention-time column (expected 'retention_time_min', 'RT' or "
     "'Ret. Time')"),
])
def test_bad_peak_table_is_one_line_naming_file_row_and_column(tmp_path, text, error,
                                                               message):
    path = tmp_path / "peaks.csv"
    path.write_text(text, encoding="utf-8")
    with pytest.raises(error) as err:
        read_peak_table(path)
    assert str(err.value) == message


def test_unknown_reference_name_names_file_row_and_column(tmp_path):
    ref = _ref(tmp_path, [("C16:0", 10.0), ("methyl unobtainate", 11.0)])
    with pytest.raises(UnknownSpeciesError) as err:
        read_reference(ref)
    assert str(err.value).startswith("ref.csv: row 3, column 'name': unknown species "
                                      "'methyl unobtainate'")


def test_saturated_standard_esters_outside_the_species_table_are_anchors_not_species(
        tmp_path):
    ref = read_reference(_ref(tmp_path, [("C16:0", 10.0), ("C21:0", 15.0), ("C13:0", 7.0)]))
    assert ref.peaks.set_index("key")["role"].to_dict() == {
        "C16:0": "species", "C21:0": "not in profile", "C13:0": "not in profile"}
    assert ref.anchors["carbons"].tolist() == [13.0, 16.0, 21.0]


def test_sample_without_a_sheet_row_gets_a_note_not_an_ester_content(tmp_path):
    ref = _ref(tmp_path, SMALL_REF)
    peaks = _peaks(tmp_path, [("a", 10.0, 100.0), ("a", 12.0, 50.0), ("a", 13.0, 30.0),
                              ("b", 10.0, 100.0), ("b", 12.0, 50.0), ("b", 13.0, 30.0)])
    sheet = _write(tmp_path / "m.csv", pd.DataFrame({"sample": ["a"], "sample_mass_mg": [250.0],
                                                     "internal_standard_mg": [50.0]}))
    content = read_peaks(peaks, ref, samples=sheet).content.set_index("sample")
    assert content.loc["a", "ester_content_wt_pct"] == pytest.approx(150 / 30 * 0.2 * 100)
    assert np.isnan(content.loc["b", "ester_content_wt_pct"])
    assert "no row in m.csv: ester content not computed" in content.loc["b", "notes"]


def test_file_peak_name_that_disagrees_with_retention_is_noted(tmp_path):
    ref = _ref(tmp_path, SMALL_REF)
    path = _write(tmp_path / "p.csv", pd.DataFrame({
        "sample": ["a", "a"], "retention_time_min": [10.0, 12.0], "area": [1.0, 1.0],
        "name": ["C16:0", "C18:1"]}))
    notes = read_peaks(path, ref).content["notes"].iat[0]
    assert "the file names a peak 'C18:1', retention says C18:0" in notes


def test_reference_without_the_internal_standard_is_noted(tmp_path):
    ref = _ref(tmp_path, [("C16:0", 10.0), ("C18:0", 12.0)])
    peaks = _peaks(tmp_path, [("a", 10.0, 100.0), ("a", 12.0, 50.0), ("a", 13.0, 30.0)])
    content = read_peaks(peaks, ref).content.iloc[0]
    assert content["notes"].startswith(
        "the reference run does not list the internal standard C19:0")
    assert content["internal_standard_area_pct"] == 0.0
