"""Reading profile files: formats, layouts, notations, metadata, and every bad input."""

from __future__ import annotations

import hashlib
import json
from pathlib import Path

import numpy as np
import pandas as pd
import pytest

from estimator.errors import EstimatorError
from estimator.profiles.io import read_profile
from estimator.tables import species_keys

ROOT = Path(__file__).resolve().parents[2]
KEYS = species_keys()


def write(tmp_path: Path, name: str, text: str) -> Path:
    path = tmp_path / name
    path.write_text(text, encoding="utf-8")
    return path


def pct(profile, sample, key):
    return profile.composition.loc[sample, key]


WIDE = "lot,supplier,price_per_t,C16:0,C18:0,C18:1,C18:2,C18:3\nA,Acme,900,10,4,24,54,8\n"


def test_wide_csv_with_metadata_carried_through(tmp_path):
    p = read_profile(write(tmp_path, "w.csv", WIDE))
    assert p.samples == ["A"]
    assert pct(p, "A", "C18:2") == pytest.approx(54)
    assert p.metadata.loc["A", "supplier"] == "Acme"
    assert p.metadata.loc["A", "price_per_t"] == 900


def test_semicolon_file_with_decimal_commas_as_european_software_writes_it():
    # data/examples/gc_report_semicolon.csv: semicolons, decimal commas, mixed notation
    p = read_profile(ROOT / "data" / "examples" / "gc_report_semicolon.csv")
    assert p.samples == ["RAP-2026-114", "RAP-2026-115"]
    raw = {"C16:0": 4.4, "C18:0": 1.6, "C18:1": 61.9, "C18:2": 19.8, "C18:3": 9.3, "C20:1": 1.2}
    total = sum(raw.values())
    assert pct(p, "RAP-2026-114", "C18:1") == pytest.approx(100 * 61.9 / total)
    assert "1.80 wt% unidentified excluded" in p.notes["RAP-2026-114"]


def test_tsv_file(tmp_path):
    p = read_profile(write(tmp_path, "w.tsv", WIDE.replace(",", "\t")))
    assert pct(p, "A", "C16:0") == pytest.approx(10)


def test_long_layout_with_methyl_ester_names():
    p = read_profile(ROOT / "data" / "examples" / "gc_report_long.csv")
    assert p.samples == ["tank-7", "tank-8"]
    assert pct(p, "tank-8", "C18:3") == pytest.approx(100 * 9.2 / 98.0)


def test_xlsx_file(tmp_path):
    path = tmp_path / "w.xlsx"
    pd.DataFrame({"sample": ["x"], "oleic": [80.0], "palmitic": [20.0]}).to_excel(
        path, index=False
    )
    p = read_profile(path)
    assert pct(p, "x", "C18:1") == pytest.approx(80)


def test_json_records_and_samples_object(tmp_path):
    a = write(tmp_path, "a.json", json.dumps([{"sample": "j", "C18:1": 70, "C16:0": 30}]))
    b = write(tmp_path, "b.json", json.dumps(
        {"samples": [{"sample": "j", "supplier": "Z", "composition": {"C18:1": 70, "C16:0": 30}}]}
    ))
    pa, pb = read_profile(a), read_profile(b)
    np.testing.assert_allclose(pa.wt_pct, pb.wt_pct)
    assert pb.metadata.loc["j", "supplier"] == "Z"


def test_not_detected_cells_count_as_zero(tmp_path):
    p = read_profile(write(tmp_path, "nd.csv", "sample,C16:0,C18:1,C18:3\nq,20,80,ND\n"))
    assert pct(p, "q", "C18:3") == 0


def test_fatty_acid_basis_is_converted(tmp_path):
    path = write(tmp_path, "fa.csv", "sample,C12:0,C18:1\nq,50,50\n")
    p = read_profile(path, basis="fatty-acid")
    m12, m18 = 50 / 200.322 * 214.349, 50 / 282.468 * 296.495  # stoichiometry
    assert pct(p, "q", "C12:0") == pytest.approx(100 * m12 / (m12 + m18), rel=1e-5)


def test_input_file_is_never_modified(tmp_path):
    path = write(tmp_path, "w.csv", "sample,C16:0,C18:1\nq,10,89\n")
    before = hashlib.sha256(path.read_bytes()).hexdigest()
    read_profile(path)
    assert hashlib.sha256(path.read_bytes()).hexdigest() == before


BAD = [
    ("text in a number cell", "s.csv", "sample,C16:0,C18:1\na,10,90\nb,abc,90\n",
     "s.csv: row 3, column 'C16:0': 'abc' is not a number"),
    ("negative value", "s.csv", "sample,C16:0,C18:1\na,-5,105\n",
     "s.csv: row 2, column 'C16:0': negative value -5"),
    ("duplicate species columns", "s.csv", "sample,C18:1,oleic,C16:0\na,40,40,20\n",
     "s.csv: columns 'C18:1' and 'oleic' are both C18:1; keep one of them"),
    ("duplicate sample ids", "s.csv", "sample,C16:0,C18:1\na,10,90\na,20,80\n",
     "s.csv: duplicate sample id 'a' (row 2, row 3)"),
    ("sum out of tolerance", "s.csv", "sample,C16:0,C18:1\na,10,80\n",
     "s.csv: row 2 (sample 'a'): composition sums to 90.00 wt%, more than 2 points from 100; "
     "add an 'other' column for unidentified peaks or raise --sum-tolerance"),
    ("header only", "s.csv", "sample,C16:0,C18:1\n",
     "s.csv: the file has a header but no data rows"),
    ("no species columns", "s.csv", "sample,supplier\na,b\n",
     "s.csv: no species columns found (expected headers such as C16:0, C18:1, oleic)"),
    ("unknown file type", "s.dat", "x", "s.dat: unknown file type '.dat'; use .csv, .tsv, .txt, "
     ".xlsx or .json"),
    ("broken json", "s.json", "{not json", None),
    ("empty sample id", "s.csv", "sample,C16:0,C18:1\n,10,90\n",
     "s.csv: row 2, column 'sample': empty sample id"),
    ("repeated header", "s.csv", "sample,C16:0,C16:0,C18:1\na,5,5,90\n",
     "s.csv: column 'C16:0' appears twice"),
    ("infinite value", "s.csv", "sample,C16:0,C18:1\na,inf,90\n",
     "s.csv: row 2, column 'C16:0': 'inf' is not a finite number"),
    ("misspelt species header read as metadata", "s.csv", "sample,C16:0,C18:l,C18:1\na,10,1,89\n",
     "s.csv: column 'C18:l' looks like a species but is not one the notation parser knows "
     "(e.g. C18:1, 18:1n-9, oleic); correct the header or rename it"),
]


@pytest.mark.parametrize(("case", "name", "text", "message"), BAD, ids=[b[0] for b in BAD])
def test_bad_input_gives_one_line_error_naming_file_row_and_column(tmp_path, case, name, text,
                                                                    message):
    path = write(tmp_path, name, text)
    with pytest.raises(EstimatorError) as err:
        read_profile(path)
    text_ = str(err.value)
    assert "\n" not in text_
    if message is None:
        assert text_.startswith(f"{name}: not valid JSON")
    else:
        assert text_ == message


def test_empty_file_is_an_error(tmp_path):
    path = write(tmp_path, "e.csv", "")
    with pytest.raises(EstimatorError) as err:
        read_profile(path)
    assert str(err.value) == "e.csv: the file is empty"


def test_missing_file_is_an_error(tmp_path):
    with pytest.raises(EstimatorError) as err:
        read_profile(tmp_path / "nope.csv")
    assert str(err.value) == "nope.csv: no such file"


# ---------------------------------------------------------------- lab files as they are
def test_percent_signs_in_cells_are_read_as_mass_percent(tmp_path):
    p = read_profile(write(tmp_path, "p.csv", "sample,C16:0,C18:1,C18:2\nA,10.5%,60%,29.5 %\n"))
    assert pct(p, "A", "C16:0") == pytest.approx(10.5)


def test_title_lines_above_the_header_are_skipped_and_named_in_a_note(tmp_path):
    text = "Instrument GC-7; column B\nOperator, R. Ames\n\nsample;C16:0;C18:1\nA;10,5;89,5\n"
    p = read_profile(write(tmp_path, "t.csv", text))
    assert pct(p, "A", "C16:0") == pytest.approx(10.5)
    assert p.file_notes == ("t.csv: header (species columns) found on row 4; rows 1-3 above "
                            "it read as titles or notes and skipped",)
    assert read_profile(write(tmp_path, "u.csv", WIDE)).file_notes == ()


def test_a_bad_cell_below_title_lines_names_its_row_in_the_file(tmp_path):
    text = "GC report\nsample,C16:0,C18:1\nA,10,90\nB,x,90\n"
    with pytest.raises(EstimatorError, match=r"^t.csv: row 4, column 'C16:0': 'x' is not"):
        read_profile(write(tmp_path, "t.csv", text))


def test_fractions_are_multiplied_by_100_when_asked(tmp_path):
    path = write(tmp_path, "f.csv", "sample,C16:0,C18:1\nA,0.1,0.9\n")
    with pytest.raises(EstimatorError, match="looks like fractions: multiply by 100 or pass"):
        read_profile(path)
    assert pct(read_profile(path, fractions=True), "A", "C16:0") == pytest.approx(10)


def test_json_null_is_an_empty_cell_but_true_is_refused(tmp_path):
    ok = [{"sample": "A", "C16:0": None, "C18:1": 100}]
    assert pct(read_profile(write(tmp_path, "n.json", json.dumps(ok))), "A", "C16:0") == 0
    bad = [{"sample": "A", "C16:0": False, "C18:1": 100}]
    with pytest.raises(EstimatorError, match=r"row 1, column 'C16:0': False is not a number"):
        read_profile(write(tmp_path, "b.json", json.dumps(bad)))


def test_ids_taken_from_a_text_column_when_no_sample_column_is_said_in_a_note(tmp_path):
    # a missing 'lot' column must not silently turn supplier names into lot ids
    path = tmp_path / "offers.csv"
    path.write_text("supplier,C16:0,C18:1\nNorthfield Oils,20,80\nBay Renderers,30,70\n")
    profile = read_profile(path)
    assert list(profile.samples) == ["Northfield Oils", "Bay Renderers"]
    assert any("no sample column" in n and "'supplier'" in n for n in profile.file_notes)
    named = tmp_path / "named.csv"
    named.write_text("lot,supplier,C16:0,C18:1\nL1,Northfield Oils,20,80\n")
    assert not read_profile(named).file_notes


@pytest.mark.parametrize("chunked", [False, True])
def test_a_row_with_one_cell_too_many_names_the_row_and_the_likely_decimal_comma(tmp_path,
                                                                                  chunked):
    from estimator.profiles.io import read_profile_chunks

    path = tmp_path / "lots.csv"
    path.write_text("sample,C16:0,C18:1\nL1,20,80\nL2,20,5,75\n")  # "20,5" meant 20.5
    with pytest.raises(EstimatorError) as err:
        if chunked:
            list(read_profile_chunks(path, min_bytes=0, chunk_rows=1))
        else:
            read_profile(path)
    assert str(err.value).startswith("lots.csv: row 3 has 4 cells where the header has 3; "
                                     "a decimal comma in a number")
