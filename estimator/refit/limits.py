"""Limits of the refit: plausible measurements, and what a model file may hold.

The plausible ranges catch unit and typing slips in a lab file (a cetane number of
-999) and give the range checks of a model file their scale. The model-file bounds
keep a file from a colleague (or an edited one) from asking for unbounded memory or
time: a file beyond them is refused with one line before any array is built.
"""

from __future__ import annotations

__all__ = [
    "MAX_ABS_NUMBER",
    "MAX_ABS_PARAMETER",
    "MAX_FEATURES",
    "MAX_GP_TRAINING_ROWS",
    "MAX_LIST_ITEMS",
    "MAX_SAMPLE_COUNT",
    "MAX_TEXT_CHARS",
    "MAX_DOMAIN_ROWS",
    "MAX_SLOPE",
    "GP_SD_SCALE_RANGE",
    "PLAUSIBLE",
    "plausible_span",
]

#: Physically plausible ranges of measured FAME properties (common practice: wide bands
#: around every biodiesel and pure ester, meant to catch unit and typing slips only).
PLAUSIBLE = {
    "cetane_number": (0.0, 120.0), "iodine_value_gI2_100g": (0.0, 300.0),
    "cfpp_C": (-60.0, 60.0), "cloud_point_C": (-60.0, 60.0), "pour_point_C": (-70.0, 60.0),
    "oxidation_stability_110C_h": (0.0, 500.0), "density_15C_kg_m3": (750.0, 1000.0),
    "kin_viscosity_40C_mm2_s": (0.5, 30.0), "hhv_MJ_kg": (30.0, 45.0),
    "lhv_MJ_kg": (28.0, 43.0),
}

#: Any number in a model file: at most this large in magnitude.
MAX_ABS_NUMBER = 1e12
#: Fitted parameters (means, scales, weights, kernel settings): at most this large.
MAX_ABS_PARAMETER = 1e6
#: Features of one model (this version uses at most 13).
MAX_FEATURES = 64
#: Training rows a Gaussian process in a model file may hold (this version writes at
#: most :data:`estimator.refit.candidates.GP_MAX_TRAIN`).
MAX_GP_TRAINING_ROWS = 2000
#: Points of a training domain (this version writes at most
#: :data:`estimator.refit.features.MAX_DOMAIN_POINTS`).
MAX_DOMAIN_ROWS = 5000
#: Entries of any other list (scores, notes).
MAX_LIST_ITEMS = 200
#: Characters of any text value.
MAX_TEXT_CHARS = 20_000
#: Sample counts (training rows, n_samples).
MAX_SAMPLE_COUNT = 10_000_000
#: Largest slope of a recalibration ``a + b x estimate`` (|b|).
MAX_SLOPE = 10.0
#: Calibration factor of a Gaussian process's own standard deviation (cross-validated).
GP_SD_SCALE_RANGE = (0.05, 100.0)


def plausible_span(property_name: str) -> tuple[float, float, float]:
    """``(low, high, span)`` of a property's plausible range (span = high - low).

    Examples
    --------
    >>> plausible_span("cfpp_C")
    (-60.0, 60.0, 120.0)
    """
    lo, hi = PLAUSIBLE.get(property_name, (-1e4, 1e4))
    return lo, hi, hi - lo
