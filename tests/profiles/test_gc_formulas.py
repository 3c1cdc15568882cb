"""The published formulas of the GC reader: EN 14103, ECL, theoretical FID factors."""

from __future__ import annotations

import importlib.util
from pathlib import Path

import numpy as np
import pytest

from estimator.profiles import gc_formulas
from estimator.profiles.gc_formulas import (
    ecl_miwa1960,
    ecl_vandendool1963,
    ester_content_en14103,
    linolenic_en14103,
    tcf_ackman1964,
)


def test_ester_content_en14103_hand_calculation_every_step():
    # No worked example from EN 14103 or a paper is at hand (shared GC notes): a hand
    # calculation of the standard's formula, C = (sum A - A_IS)/A_IS x (C_IS V_IS)/m x 100.
    sample_mass_mg = 250.0  # m, weighed in
    is_mg = 10.0 * 5.0  # C_IS = 10 mg/mL methyl nonadecanoate, V_IS = 5 mL -> 50.0 mg
    total_area = 1_234_567.0  # sum of all peaks C6:0 .. C24:1, internal standard included
    is_area = 210_000.0  # A_IS
    # step 1: esters' area = 1 234 567 - 210 000 = 1 024 567
    # step 2: relative to the internal standard: 1 024 567 / 210 000 = 4.878890476...
    # step 3: times the mass ratio 50.0 / 250.0 = 0.2 -> 0.975778095...
    # step 4: times 100 -> 97.5778 % (m/m)
    got = ester_content_en14103(np.array([total_area]), np.array([is_area]),
                                np.array([is_mg]), np.array([sample_mass_mg]))
    assert got[0] == pytest.approx(97.5778, abs=5e-5)  # hand calculation above


def test_linolenic_en14103_hand_calculation_every_step():
    # L = A_C18:3 / (sum A - A_IS) x 100, areas as measured (shared GC notes, MEMORY form)
    # step 1: esters' area = 1 234 567 - 210 000 = 1 024 567
    # step 2: 92 000 / 1 024 567 = 0.0897940...; step 3: x 100 -> 8.9794 % (m/m)
    got = linolenic_en14103(np.array([92_000.0]), np.array([1_234_567.0]),
                            np.array([210_000.0]))
    assert got[0] == pytest.approx(8.9794, abs=5e-5)  # hand calculation above


def test_ester_content_is_vectorised_over_samples():
    got = ester_content_en14103(np.array([1000.0, 2000.0]), np.array([100.0, 100.0]),
                                np.array([50.0, 50.0]), np.array([250.0, 250.0]))
    # hand: 900/100 x 0.2 x 100 = 180; 1900/100 x 0.2 x 100 = 380
    assert got.tolist() == pytest.approx([180.0, 380.0])


def test_ecl_miwa1960_hand_calculation_on_adjusted_times():
    # Miwa et al. 1960 definition: ECL = n + (log t'x - log t'n)/(log t'n+1 - log t'n).
    # Hand case: dead time 1.0 min, C16:0 at 11.0 and C18:0 at 21.0 min -> t' = 10 and 20.
    # A peak with t' = 10*sqrt(2) = 14.1421 lies half-way on the log scale: ECL 17.0.
    t = 1.0 + 10.0 * np.sqrt(2.0)
    got = ecl_miwa1960(np.array([t, 11.0, 21.0]), np.array([11.0, 21.0]), np.array([16, 18]),
                       dead_time_min=1.0)
    assert got.tolist() == pytest.approx([17.0, 16.0, 18.0])  # hand calculation above


def test_ecl_vandendool1963_hand_calculation_between_consecutive_esters():
    # van den Dool & Kratz 1963 linear form: ECL = n + (tx - tn)/(tn+1 - tn).
    # Hand case: C18:0 at 16.80, C19:0 at 17.90 min; a peak at 17.14 -> 18 + 0.34/1.10
    got = ecl_vandendool1963(np.array([17.14]), np.array([15.5, 16.80, 17.90]),
                             np.array([17, 18, 19]))
    assert got[0] == pytest.approx(18.0 + 0.34 / 1.10)  # = 18.3091, hand calculation


def test_ecl_outside_the_anchors_extends_the_end_pair():
    # beyond the last anchor the last pair's slope is continued (no clamping)
    got = ecl_vandendool1963(np.array([25.0]), np.array([10.0, 20.0]), np.array([16, 18]))
    assert got[0] == pytest.approx(19.0)  # hand: 18 + 2 x 5/10


@pytest.mark.parametrize(("key", "cas"), [
    ("C18:1", "112-62-9"),  # methyl oleate
    ("C12:0", "111-82-0"),  # methyl laurate
    ("C18:3", "301-00-8"),  # methyl linolenate
])
def test_tcf_ackman1964_against_molar_masses_from_chemicals(key, cas):
    chemicals = pytest.importorskip("chemicals")
    from estimator.tables import species_table

    # Formula of the shared GC notes (Ackman & Sipos 1964 effective carbon number; ISO
    # 12966-4 / AOCS Ce 1h-05 form), MEMORY; molar masses from chemicals 1.5.2 (outside the
    # project): TCF = (M_i/n_i) / (M_C16:0/16), methyl palmitate CAS 112-39-0.
    row = species_table().loc[key]
    expected = (chemicals.MW(cas) / row["carbons"]) / (chemicals.MW("112-39-0") / 16)
    got = tcf_ackman1964(np.array([row["fame_molar_mass_g_mol"]]), np.array([row["carbons"]]))
    assert got[0] == pytest.approx(expected, rel=2e-4)


def test_tcf_shorter_esters_need_a_larger_mass_factor():
    # effective-carbon-number idea (Ackman & Sipos 1964): the carbonyl carbon gives no
    # signal, so a short ester (a larger share of its mass in the ester group) gives less
    # area per mass: its factor exceeds methyl palmitate's, a long one's falls below.
    f = tcf_ackman1964(np.array([130.187, 270.457, 382.673]), np.array([6, 16, 24]))
    assert f[0] > 1.15 and f[1] == pytest.approx(1.0) and f[2] < 0.96


def _docstring_checker():
    path = Path(__file__).resolve().parents[1] / "properties" / "test_docstrings.py"
    spec = importlib.util.spec_from_file_location("docstring_rules", path)
    module = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(module)
    return module.docstring_problems


@pytest.mark.parametrize("name", gc_formulas.__all__)
def test_gc_formula_docstrings_follow_the_correlation_rules(name):
    problems = _docstring_checker()(getattr(gc_formulas, name), require_references=True)
    assert not problems, problems
