"""Codex CXS 210 range warnings for samples labelled as a given oil."""

from __future__ import annotations

import pandas as pd
import pytest

from estimator.profiles.profile import Profile
from estimator.profiles.ranges import codex_warnings, feedstock_key


@pytest.mark.parametrize(
    ("label", "key"),
    [("soybean", "soybean"), ("Soya bean oil", "soybean"), ("canola", "rapeseed"),
     ("high-oleic sunflower", "sunflower-high-oleic"), ("Flaxseed", "linseed"),
     ("beef tallow", None), ("", None)],
)
def test_feedstock_labels_map_to_library_oils(label, key):
    # common practice: trade names of the Codex CXS 210 oils
    assert feedstock_key(label) == key


def profile(comp: dict[str, float], feedstock: str) -> Profile:
    frame = pd.DataFrame([comp], index=["lot"])
    meta = pd.DataFrame({"feedstock": [feedstock]}, index=["lot"])
    return Profile.from_frame(frame, metadata=meta, basis="fatty-acid")


def test_typical_soybean_lies_inside_its_codex_ranges():
    # Japan Oilseed Processors Association 2019 typical soybean (standards.md 4.2, S29)
    p = profile({"C16:0": 10.3, "C18:0": 3.9, "C18:1": 23.7, "C18:2": 54.3, "C18:3": 6.8},
                "soybean")
    assert codex_warnings(p).iloc[0] == ""


def test_sample_labelled_soybean_with_rapeseed_profile_is_warned():
    # a rapeseed-like profile: C18:1 64 % is far above Codex soybean 17-30 % (standards.md 4.1)
    p = profile({"C16:0": 4.1, "C18:0": 1.8, "C18:1": 64.1, "C18:2": 20.5, "C18:3": 9.5},
                "soybean")
    text = codex_warnings(p).iloc[0]
    assert text.startswith("outside Codex CXS 210 ranges for soybean: C16:0 4.1 outside 8-13.5")
    assert "C18:1 64.1 outside 17-30" in text
    assert "oil iodine value" in text
