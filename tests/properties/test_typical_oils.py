"""Default estimates on the built-in typical oils against the trade's ranges (issue 9).

Each check: the default estimate of ``Profile.from_oils(oil)`` lies within ``allowance``
of the range the trade knows. The allowances are the widest bands issue 9 accepts
(cetane 6, cloud point 4 degC, CFPP 5 degC, Rancimat 3 h; pour point taken as the cloud
point's). The ranges carry their source beside them; most are common practice or recalled
(from memory), so a check here is a plausibility guard, not a validation statistic.
"""

from __future__ import annotations

import pytest

from estimator.profiles.profile import Profile
from estimator.properties.predict import estimate_wide

# most ranges are recalled or common practice: plausibility guards, not outside references
pytestmark = pytest.mark.memory

ALLOWANCE = {"cetane_number": 6.0, "cloud_point_C": 4.0, "cfpp_C": 5.0, "pour_point_C": 4.0,
             "oxidation_stability_110C_h": 3.0}
INF = float("inf")

TRADE_RANGES = [
    # (oil, property, low, high)
    ("palm", "cloud_point_C", 13.0, 16.0),  # common practice (issue 9)
    ("palm", "pour_point_C", 12.0, 15.0),  # from memory
    ("palm", "cetane_number", 60.0, 67.0),  # from memory
    ("palm", "oxidation_stability_110C_h", 8.0, INF),  # meets 8 h unadditised; common practice
    ("beef-tallow", "cloud_point_C", 13.0, 17.0),  # common practice (issue 9)
    ("beef-tallow", "pour_point_C", 9.0, 15.0),  # from memory; 20 % stearate must show
    ("beef-tallow", "cetane_number", 58.0, 65.0),  # from memory
    ("linseed", "oxidation_stability_110C_h", 0.0, 3.0),  # well under 3 h; common practice
    ("coconut", "cetane_number", 60.0, 70.0),  # common practice (issue 9)
    ("soybean", "cetane_number", 45.0, 60.0),  # Bamgboye & Hansen 2008 via Refaat 2009 [S10]
    ("rapeseed", "cetane_number", 48.0, 61.2),  # Bamgboye & Hansen 2008 via Refaat 2009 [S10]
    ("soybean", "cloud_point_C", -2.0, 2.0),  # from memory
    ("soybean", "cfpp_C", -5.0, -2.0),  # from memory
    ("soybean", "pour_point_C", -4.0, 0.0),  # from memory
    ("soybean", "oxidation_stability_110C_h", 2.0, 6.0),  # unadditised; from memory
    ("rapeseed", "cloud_point_C", -5.0, -2.0),  # from memory
    ("rapeseed", "cfpp_C", -15.0, -10.0),  # from memory
    ("rapeseed", "pour_point_C", -12.0, -9.0),  # from memory
    ("rapeseed", "oxidation_stability_110C_h", 5.0, 9.0),  # unadditised; from memory
]

KNOWN_MISSES = {
    # Ramos 2009 (the default CFPP, fitted on C16-C18 vegetable oils) gives palm +4.6 degC;
    # CFPP from the ideal-solubility cloud point gives +16.9: both outside 10-12 +/- 5
    ("palm", "cfpp_C", 10.0, 12.0),  # common practice (issue 9)
}


@pytest.fixture(scope="module")
def table():
    oils = sorted({row[0] for row in TRADE_RANGES} | {row[0] for row in KNOWN_MISSES})
    profile = Profile.from_oils(oils)
    return estimate_wide(profile.wt_pct, profile.samples).set_index("sample")


def _distance(value: float, lo: float, hi: float) -> float:
    return max(lo - value, value - hi, 0.0)


@pytest.mark.parametrize(("oil", "prop", "lo", "hi"), TRADE_RANGES)
def test_default_estimate_is_within_the_allowance_of_the_trade_range(table, oil, prop, lo, hi):
    value = table.loc[oil, prop]
    assert _distance(value, lo, hi) <= ALLOWANCE[prop], f"{oil} {prop} = {value:.2f}"


@pytest.mark.xfail(strict=True, reason="palm CFPP: no published method here reaches +10..+12")
@pytest.mark.parametrize(("oil", "prop", "lo", "hi"), sorted(KNOWN_MISSES))
def test_known_miss_palm_cfpp(table, oil, prop, lo, hi):
    value = table.loc[oil, prop]
    assert _distance(value, lo, hi) <= ALLOWANCE[prop], f"{oil} {prop} = {value:.2f}"


def test_tallow_cfpp_from_ramos_is_flagged_outside_its_domain(table):
    # tallow's LCSF (about 13) is twice that of any oil Ramos et al. fitted; the value
    # (about 25 degC) must carry the flag instead of passing as an in-domain estimate
    assert "cfpp_C: outside ramos2009 domain" in table.loc["beef-tallow", "flags"]
