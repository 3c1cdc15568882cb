"""GC reports that list several isomers of one lipid number (issue 13 point 9, issue 9).

Coriander-seed ester carries petroselinic acid (cis-6) beside oleic (cis-9); partly
hydrogenated fats carry elaidic (trans-9) beside oleic; tung oil carries conjugated
eleostearic beside linolenic. Each isomer is read into its own species key.
"""

from __future__ import annotations

import pytest

from estimator.profiles.io import read_profile
from estimator.properties.predict import estimate_wide


@pytest.mark.parametrize(("header", "keys"), [
    # coriander-type: petroselinic ~ 65-75 % of fatty acids (common practice, from memory)
    ("sample,C16:0,petroselinic,oleic,C18:2", ("C16:0", "C18:1n12", "C18:1", "C18:2")),
    ("sample,C16:0,C18:1 cis-6,C18:1 cis-9,C18:2", ("C16:0", "C18:1n12", "C18:1", "C18:2")),
    ("sample,C16:0,18:1n-12,18:1n-9,C18:2", ("C16:0", "C18:1n12", "C18:1", "C18:2")),
    ("sample,C16:0,elaidic,oleic,C18:2", ("C16:0", "C18:1t", "C18:1", "C18:2")),
    ("sample,C16:0,C18:1t,C18:1c,C18:2", ("C16:0", "C18:1t", "C18:1", "C18:2")),
    ("sample,C16:0,eleostearic,C18:3,C18:2", ("C16:0", "C18:3conj", "C18:3", "C18:2")),
    ("sample,C16:0,C18:3 conj,C18:3 n-3,C18:2", ("C16:0", "C18:3conj", "C18:3", "C18:2")),
])
def test_report_with_two_isomers_of_one_lipid_number_is_read_into_both_keys(
        tmp_path, header, keys):
    path = tmp_path / "gc.csv"
    path.write_text(f"{header}\nlot-1,4.0,68.0,20.0,8.0\n", encoding="utf-8")
    profile = read_profile(path)
    row = profile.composition.loc["lot-1"]
    assert [row[k] for k in keys] == pytest.approx([4.0, 68.0, 20.0, 8.0])


def test_isomer_without_data_is_estimated_with_a_flag_not_silently(tmp_path):
    path = tmp_path / "gc.csv"
    path.write_text("sample,C16:0,petroselinic,oleic,C18:2\ncoriander,4.0,68.0,20.0,8.0\n",
                    encoding="utf-8")
    profile = read_profile(path)
    flags = estimate_wide(profile.wt_pct, profile.samples)["flags"].iloc[0]
    # no melting point of methyl petroselinate is recorded: the cloud point says so
    assert "cloud_point_C: outside imahara2006 domain (esters without melting data" in flags
    assert "cetane_number: outside knothe2005 domain" in flags
