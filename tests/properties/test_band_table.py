"""The shipped band table (estimator/tables/method_bands.csv) and its use (issue 11).

Regression tests: the table holds the code's own computation, so these tests compare
the code with itself; the bands' evidence is checked against outside sources in
test_uncertainty.py.
"""

from __future__ import annotations

import math

import pytest

from estimator.properties import uncertainty
from estimator.properties.methods import DEFAULTS, methods_for
from estimator.properties.uncertainty import (
    band_inputs_digest,
    computed_band,
    method_band,
    read_band_table,
)

RERUN = ("estimator/tables/method_bands.csv is out of date: rerun "
         "`python scripts/build_band_table.py` and commit the file")
REGISTERED = [(prop, name) for prop in DEFAULTS for name in methods_for(prop)]


@pytest.fixture
def fresh_caches():
    """Clear the band caches before and after a test that changes what they see."""
    residuals = uncertainty.residuals  # the cached function, also while a test stands in

    def clear():
        uncertainty.method_band.cache_clear()
        uncertainty._shipped_bands.cache_clear()
        residuals.cache_clear()

    clear()
    yield
    clear()


def _same(a: float | None, b: float | None) -> bool:
    # the file keeps every float exactly (repr); the tolerance only absorbs a last-digit
    # difference of another NumPy build's summation order. A 5 % change fails.
    if a is None or b is None:
        return a is b
    return math.isclose(a, b, rel_tol=1e-12, abs_tol=0.0)


def test_regression_shipped_band_table_equals_the_computation():
    shipped, digests = read_band_table()
    assert digests == {band_inputs_digest()}, RERUN + " (the tables it comes from changed)"
    assert sorted(shipped) == sorted(REGISTERED), RERUN + " (methods added or removed)"
    for key in REGISTERED:
        got, want = shipped[key], computed_band(*key)
        assert (got.prop, got.method, got.kind, got.n_residuals, got.text,
                got.with_fallback) == (want.prop, want.method, want.kind, want.n_residuals,
                                       want.text, want.with_fallback), f"{key}: {RERUN}"
        assert _same(got.absolute, want.absolute), f"{key} absolute: {RERUN}"
        assert _same(got.relative, want.relative), f"{key} relative: {RERUN}"


def test_regression_build_script_reproduces_the_file_byte_for_byte():
    import importlib.util
    from pathlib import Path

    path = Path(__file__).resolve().parents[2] / "scripts" / "build_band_table.py"
    spec = importlib.util.spec_from_file_location("build_band_table", path)
    module = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(module)
    assert module.OUT.read_text(encoding="utf-8") == module.table_text(), RERUN


def test_a_registered_method_reads_its_band_without_computing_residuals(monkeypatch,
                                                                        fresh_caches):
    def refuse(prop, name):
        raise AssertionError("residuals computed although the band is shipped")

    monkeypatch.setattr(uncertainty, "residuals", refuse)
    for key in REGISTERED:
        assert method_band(*key).prop == key[0]


def test_changed_input_tables_make_the_bands_computed_again(monkeypatch, fresh_caches):
    prop, name = "iodine_value_gI2_100g", "stoichiometric"
    computed = []
    original = uncertainty.residuals

    def counting(p, n):
        computed.append((p, n))
        return original(p, n)

    monkeypatch.setattr(uncertainty, "band_inputs_digest", lambda: "0" * 16)
    monkeypatch.setattr(uncertainty, "residuals", counting)
    band = method_band(prop, name)
    assert computed == [(prop, name)]
    assert band == read_band_table()[0][(prop, name)]  # the tables did not really change


def test_a_stand_in_method_gets_a_computed_band(monkeypatch, fresh_caches):
    from estimator.properties import methods

    prop, name = "cetane_number", "bamgboye2008"
    original = methods.registry()[prop][name]
    shifted = type(original)(**{**original.__dict__,
                                "function": lambda w, d, t=None: original.function(w, d) - 8})
    monkeypatch.setattr(uncertainty, "get_method", lambda p, n: shifted)
    assert method_band(prop, name).absolute > read_band_table()[0][(prop, name)].absolute + 4


def test_input_digest_covers_every_table_the_bands_come_from():
    assert set(uncertainty.BAND_INPUT_TABLES) == {
        "validation_pure_esters", "validation_feedstocks", "species", "feedstocks"}
    assert len(band_inputs_digest()) == 16
