"""scripts/validate_methods.py: its statistics use the rows and the band that predict uses."""

from __future__ import annotations

import importlib.util
from pathlib import Path

import numpy as np
import pytest

from estimator.properties.methods import DEFAULTS
from estimator.properties.uncertainty import method_band

SCRIPT = Path(__file__).resolve().parents[2] / "scripts" / "validate_methods.py"


@pytest.fixture(scope="module")
def table():
    spec = importlib.util.spec_from_file_location("validate_methods", SCRIPT)
    module = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(module)
    return module.summary(defaults_only=True).set_index("property")


def test_counts_are_the_rows_the_band_is_built_from(table):
    # rows that are a method's own inputs (e.g. the pure-ester cetane numbers the
    # pure-ester weighting reads) count neither in the band nor in the printed statistics
    for prop, name in DEFAULTS.items():
        assert table.loc[prop, "method"] == name
        assert table.loc[prop, "n"] == method_band(prop, name).n_residuals, prop


def test_printed_band_is_the_method_band_with_the_composition_part(table):
    # predict's error combines the evidence band with the GC part: never narrower
    for prop, name in DEFAULTS.items():
        row = table.loc[prop]
        b = method_band(prop, name)
        if row["n"] == 0 or b.absolute is None:
            continue
        assert row["band"] >= b.absolute - 1e-9, prop
        assert row["band"] < 1.5 * b.absolute, prop  # the GC part is small on these rows
    shares = table[["within_1", "within_2"]].to_numpy(dtype=float)
    ok = np.isfinite(shares)
    assert ((shares[ok] >= 0) & (shares[ok] <= 1)).all()
    assert (table["within_2"].fillna(1) >= table["within_1"].fillna(0)).all()
