"""Density and viscosity against thermo/chemicals, Knothe 2012 and invariants."""

from __future__ import annotations

import warnings

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from estimator.properties import transport
from estimator.properties.descriptors import descriptors
from estimator.properties.methods import get_method, methods_for
from estimator.properties.predict import estimate
from estimator.tables import composition_row, species_keys

KEYS = species_keys()

# CAS numbers of the five esters with fitted data in thermo 0.6.1 (reference_libs.md Table 1)
CAS = {"C16:0": "112-39-0", "C18:0": "112-61-8", "C18:1": "112-62-9", "C18:2": "112-63-0",
       "C18:3": "301-00-8"}
# CRC melting points (species.csv, VERIFIED [S29]); below them the liquid is sub-cooled
MELTING_C = {"C16:0": 29.6, "C18:0": 38.7, "C18:1": -19.7, "C18:2": -36.6, "C18:3": -49.0}
# soybean-like mixture of reference_libs.md 4.2 (mass %)
SOY_REF = {"C16:0": 11.0, "C18:0": 4.0, "C18:1": 24.0, "C18:2": 53.0, "C18:3": 8.0}


comp = composition_row  # species key -> mass, renormalised to 100 wt %


def _thermo_chemical(cas):
    thermo = pytest.importorskip("thermo")
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")  # pandas-3 noise from chemicals (reference_libs 6.7)
        c = thermo.Chemical(cas, T=298.15)
    volume, viscosity = c.VolumeLiquid, c.ViscosityLiquid
    volume.method = "HEOS_FIT"  # pinned as reference_libs.md section 6.2 says
    viscosity.method = "REFPROP_FIT"
    return c, volume, viscosity


@pytest.mark.reference
@pytest.mark.parametrize("method", ["ramirezverduzco2022", "ramirezverduzco2012"])
@pytest.mark.parametrize("key", list(CAS))
@pytest.mark.parametrize("temperature_C", [15.0, 20.0, 40.0])
def test_pure_ester_density_against_thermo_heos_fit(key, temperature_C, method):
    c, volume, _ = _thermo_chemical(CAS[key])
    reference = c.MW / 1e3 / volume.T_dependent_property(temperature_C + 273.15)
    w = comp({key: 100.0})
    ours = get_method("density_15C_kg_m3", method).evaluate(w, descriptors(w), temperature_C)[0]
    # thermo 0.6.1 HEOS_FIT is within 0.5 % of literature (reference_libs.md section 1), 1 % for
    # sub-cooled C16:0/C18:0; plus the method's own AAD 0.29 % (Ramirez-Verduzco 2022,
    # Sustainability 14:6804) -> 0.8 % liquid, 1.0 % sub-cooled
    tol = 0.010 if temperature_C < MELTING_C[key] else 0.008
    assert ours == pytest.approx(reference, rel=tol)


@pytest.mark.reference
@pytest.mark.parametrize("method", ["allen1999", "krisnangkura2006", "ramirezverduzco2012"])
@pytest.mark.parametrize("key", list(CAS))
def test_pure_ester_viscosity_40C_against_thermo_refprop_fit(key, method):
    c, volume, viscosity = _thermo_chemical(CAS[key])
    rho40 = c.MW / 1e3 / volume.T_dependent_property(313.15)
    reference = viscosity.T_dependent_property(313.15) / rho40 * 1e6
    w = comp({key: 100.0})
    ours = get_method("kin_viscosity_40C_mm2_s", method).evaluate(w, descriptors(w))[0]
    # reference_libs.md section 1: REFPROP_FIT usable to +/-3 % (C16:0-C18:2), +/-8 % (C18:3);
    # Ramirez-Verduzco 2012 per-ester form for C18:0 reads 5.59 vs 5.85 measured
    # (correlations.md 8.1, -4.4 %), so that pair gets the 5.6 % Krisnangkura 2006 maximum
    # deviation stated for methyl stearate (Fuel 85:107, VERIFIED [S32])
    tol = 0.08 if key == "C18:3" else 0.03
    if key == "C18:0" and method == "ramirezverduzco2012":
        tol = 0.056
    assert ours == pytest.approx(reference, rel=tol)


@pytest.mark.reference
def test_soybean_like_mixture_end_to_end_against_thermo():
    thermo = pytest.importorskip("thermo")
    ids = [CAS[k] for k in SOY_REF]
    ws = [SOY_REF[k] / 100.0 for k in SOY_REF]
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        constants, corr = thermo.ChemicalConstantsPackage.from_IDs(ids)
    zs = [w / mw for w, mw in zip(ws, constants.MWs)]
    zs = [z / sum(zs) for z in zs]
    mw = sum(z * m for z, m in zip(zs, constants.MWs))
    rho15 = mw / 1e3 / corr.VolumeLiquidMixture(288.15, 101325.0, zs, ws)
    rho40 = mw / 1e3 / corr.VolumeLiquidMixture(313.15, 101325.0, zs, ws)
    nu40 = corr.ViscosityLiquidMixture(313.15, 101325.0, zs, ws) / rho40 * 1e6
    # regression pin of the reference itself (reference_libs.md 4.2 printed 884.66 / 4.014)
    assert rho15 == pytest.approx(884.66, abs=0.01)
    assert nu40 == pytest.approx(4.014, abs=0.001)

    long = estimate(comp(SOY_REF), ["soy"])
    rho = long.loc[long.property == "density_15C_kg_m3", "value"].iloc[0]
    nu = long.loc[long.property == "kin_viscosity_40C_mm2_s", "value"].iloc[0]
    # Ramirez-Verduzco 2022 AAD 0.29 % (VERIFIED [S20]) + reference 0.3 % -> 0.6 %
    assert rho == pytest.approx(rho15, rel=0.006)
    # Allen et al. 1999, Fuel 78:1319: 3 % average on natural biodiesels (VERIFIED [S33])
    assert nu == pytest.approx(nu40, rel=0.03)


def test_group_contribution_reproduces_published_worked_example():
    # Ramirez-Verduzco 2022, Sustainability 14:6804, Appendix B: methyl hexadecanoate,
    # 303.15 K, V = 316.3233 cm3/mol
    v = transport.ramirezverduzco2022_molar_volume(16, 0, 30.0)
    assert v == pytest.approx(316.3233, abs=5e-5)


@pytest.mark.parametrize(
    ("key", "published"),
    # Knothe 2012, Energy Fuels 26:5265 (VERIFIED [S13]; pages from memory): nu40 mm2/s
    [("C20:4", 3.11), ("C22:6", 2.97)],
)
def test_polyunsaturated_viscosity_knothe2012_default_within_tolerance(key, published):
    w = comp({key: 100.0})
    long = estimate(w, [key])
    row = long[long.property == "kin_viscosity_40C_mm2_s"].iloc[0]
    # the default (allen1999) uses the measured value: within the published 0.01 precision
    assert row["method"] == "allen1999"
    assert row["value"] == pytest.approx(published, abs=0.005)
    assert bool(row["in_domain"])
    # the per-ester correlation is outside its domain for >= 4 C=C, and flagged as such
    rv = get_method("kin_viscosity_40C_mm2_s", "ramirezverduzco2012")
    assert not rv.in_domain(w, descriptors(w))[0]


@pytest.mark.memory  # the EN 14214 Annex B slope is recalled
def test_en14214_density_slope_moves_rv2012_between_temperatures():
    # EN 14214 Annex B, rho15 = rho_t + 0.723 (t - 15) (MEMORY, correlations.md 7.4)
    w = comp(SOY_REF)
    d15 = transport.ramirezverduzco2012_density(w, 15.0)
    d40 = transport.ramirezverduzco2012_density(w, 40.0)
    assert (d15 - d40)[0] == pytest.approx(0.723 * 25, abs=1e-9)


def test_group_contribution_slope_matches_eos_slope():
    # dRho/dT -0.73 to -0.77 kg/m3/K for C16-C18 esters, 15-40 C (correlations.md 7.4, DERIVED
    # from the Huber 2009 EOS); group contribution within 0.05 of that band
    for key in ("C16:0", "C18:1", "C18:2", "C18:3"):
        w = comp({key: 100.0})
        slope = (transport.ramirezverduzco2022(w, 40.0) - transport.ramirezverduzco2022(w, 15.0))
        assert -0.82 < slope[0] / 25.0 < -0.68


def test_per_sample_temperatures_broadcast():
    w = np.vstack([comp(SOY_REF), comp(SOY_REF)])
    both = transport.allen1999(w, np.array([20.0, 60.0]))
    assert both[0] == pytest.approx(transport.allen1999(w[:1], 20.0)[0])
    assert both[1] == pytest.approx(transport.allen1999(w[:1], 60.0)[0])


def test_log_mixing_is_exact_for_one_component_and_geometric_for_two():
    assert transport.log_mixing_viscosity([100.0], [4.2]) == pytest.approx(4.2)
    assert transport.log_mixing_viscosity([50.0, 50.0], [2.0, 8.0]) == pytest.approx(4.0)


compositions = st.lists(st.floats(0.0, 1.0), min_size=len(KEYS), max_size=len(KEYS)).filter(
    lambda xs: sum(xs) > 0.05
)


@settings(max_examples=60, deadline=None)
@given(compositions, st.floats(-20.0, 90.0), st.floats(0.5, 40.0))
def test_density_and_viscosity_fall_with_temperature(xs, t, dt):
    w = np.array(xs)[None, :]
    w = 100.0 * w / w.sum()
    desc = descriptors(w)
    for prop in ("density_15C_kg_m3", "kin_viscosity_40C_mm2_s"):
        for m in methods_for(prop).values():
            cold = m.evaluate(w, desc, t)[0]
            warm = m.evaluate(w, desc, t + dt)[0]
            assert warm < cold, (prop, m.name)


@pytest.mark.memory  # the reference note's own evaluation of recalled equations
@pytest.mark.parametrize(
    ("key", "published"),
    # correlations.md 8.1, Krisnangkura 2006 column (the reference note's own evaluation of
    # the recalled equations, Fuel 85:107), printed to 0.01 mm2/s
    [("C12:0", 2.45), ("C14:0", 3.29), ("C16:0", 4.43), ("C18:0", 5.96), ("C18:1", 4.58),
     ("C18:2", 3.71), ("C18:3", 3.33)],
)
def test_krisnangkura2006_per_ester_viscosity_matches_the_reference_note(key, published):
    i = KEYS.index(key)
    carbons, bonds = int(key[1:3]), int(key.split(":")[1])
    assert transport.krisnangkura2006_ester(carbons, bonds, 40.0) == pytest.approx(
        published, abs=0.0051), i


@pytest.mark.parametrize(
    ("key", "temperature_C", "published"),
    # correlations.md 7.1, GC columns: the Ramirez-Verduzco 2022 group contribution (VERIFIED
    # coefficients [S20]) evaluated by the reference note, printed to 0.1 kg/m3
    [("C12:0", 15.0, 870.3), ("C14:0", 40.0, 849.0), ("C18:1", 15.0, 875.9),
     ("C18:1", 20.0, 872.4), ("C18:1", 40.0, 858.2), ("C18:2", 15.0, 888.1),
     ("C18:2", 40.0, 870.2), ("C18:3", 15.0, 900.8), ("C18:3", 40.0, 882.7),
     ("C22:1", 20.0, 868.2), ("C16:1", 40.0, 860.5)],
)
def test_group_contribution_density_matches_the_reference_note_table(key, temperature_C,
                                                                      published):
    rho = transport.ramirezverduzco2022(comp({key: 100.0}), temperature_C)[0]
    assert rho == pytest.approx(published, abs=0.051)
