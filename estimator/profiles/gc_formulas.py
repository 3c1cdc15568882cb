"""The published formulas behind reading a FAME chromatogram: ECL, FID factors, EN 14103.

Small vectorised functions named after their source, used by
:mod:`estimator.profiles.peaks`:

* :func:`ecl_miwa1960` and :func:`ecl_vandendool1963`: equivalent chain length of a
  peak from the saturated methyl esters that bracket it;
* :func:`tcf_ackman1964`: the theoretical FID correction factor of a methyl ester on
  the effective-carbon-number basis (the factors ISO 12966-4 and AOCS Ce 1h-05
  tabulate);
* :func:`ester_content_en14103` and :func:`linolenic_en14103`: ester content and
  linolenic acid methyl ester by internal standard, peak areas as measured.
"""

from __future__ import annotations

import numpy as np

__all__ = [
    "ecl_miwa1960",
    "ecl_vandendool1963",
    "ester_content_en14103",
    "linolenic_en14103",
    "tcf_ackman1964",
]


def _piecewise(x: np.ndarray, anchor_x: np.ndarray, anchor_n: np.ndarray) -> np.ndarray:
    """Linear interpolation through the anchors, extended linearly beyond the end pairs."""
    order = np.argsort(anchor_x)
    ax, an = anchor_x[order], anchor_n[order]
    if len(ax) < 2:
        raise ValueError("at least two saturated esters are needed to compute an ECL")
    idx = np.clip(np.searchsorted(ax, x, side="right") - 1, 0, len(ax) - 2)
    x0, x1 = ax[idx], ax[idx + 1]
    return an[idx] + (an[idx + 1] - an[idx]) * (x - x0) / (x1 - x0)


def ecl_miwa1960(
    retention_time_min: np.ndarray,
    anchor_retention_time_min: np.ndarray,
    anchor_carbons: np.ndarray,
    *,
    dead_time_min: float = 0.0,
) -> np.ndarray:
    r"""Equivalent chain length of a peak, isothermal (logarithmic) form of Miwa et al. 1960.

    .. math::

        ECL_x = n + \frac{\log t'_x - \log t'_n}{\log t'_{n+1} - \log t'_n},
        \qquad t' = t - t_0

    where :math:`n` and :math:`n+1` are the saturated methyl esters that bracket the
    peak (any two consecutive anchors; beyond the first or last anchor the end pair
    is extended).

    Parameters
    ----------
    retention_time_min : ndarray
        Retention times of the peaks. [min]
    anchor_retention_time_min : ndarray
        Retention times of the saturated methyl esters of the same run. [min]
    anchor_carbons : ndarray
        Carbon number of each of those esters' acids (16 for methyl palmitate). [1]
    dead_time_min : float
        Column dead time :math:`t_0`; 0 uses the retention times as they are. [min]

    Returns
    -------
    ndarray
        Equivalent chain length of each peak. [1]

    Notes
    -----
    Miwa et al. defined ECL for isothermal runs on the logarithmic retention scale.
    Temperature-programmed runs (as EN 14103 uses) are closer to linear in time:
    :func:`ecl_vandendool1963`. Only used to carry the reference run's identification
    over to a sample run whose retention times have drifted; the identification itself
    comes from the user's own reference run, never from fixed ECL values, because the
    ECL of an unsaturated ester depends on the column's phase.
    Mark: MEMORY (the formula as recalled in the shared GC notes, not checked against
    the paper's text).

    References
    ----------
    .. [1] Miwa, T. K., Mikolajczak, K. L., Earle, F. R., Wolff, I. A. (1960). Gas
       chromatographic characterization of fatty acids: identification constants for
       mono- and dicarboxylic methyl esters. Analytical Chemistry 32(13), 1739-1742.
       https://doi.org/10.1021/ac50153a010

    Examples
    --------
    >>> float(ecl_miwa1960(np.array([20.0]), np.array([10.0, 40.0]), np.array([16, 18]))[0])
    17.0
    """
    t = np.asarray(retention_time_min, dtype=float) - dead_time_min
    a = np.asarray(anchor_retention_time_min, dtype=float) - dead_time_min
    if np.any(t <= 0) or np.any(a <= 0):
        raise ValueError("retention times must exceed the dead time")
    return _piecewise(np.log(t), np.log(a), np.asarray(anchor_carbons, dtype=float))


def ecl_vandendool1963(
    retention_time_min: np.ndarray,
    anchor_retention_time_min: np.ndarray,
    anchor_carbons: np.ndarray,
) -> np.ndarray:
    r"""Equivalent chain length, linear (temperature-programmed) form of van den Dool & Kratz.

    .. math::

        ECL_x = n + \frac{t_x - t_n}{t_{n+1} - t_n}

    Parameters
    ----------
    retention_time_min : ndarray
        Retention times of the peaks. [min]
    anchor_retention_time_min : ndarray
        Retention times of the saturated methyl esters of the same run. [min]
    anchor_carbons : ndarray
        Carbon number of each of those esters' acids. [1]

    Returns
    -------
    ndarray
        Equivalent chain length of each peak. [1]

    Notes
    -----
    The retention-index idea of van den Dool & Kratz applied to the saturated methyl
    ester series, as is usual for temperature-programmed FAME runs. Mark: MEMORY.

    References
    ----------
    .. [1] van den Dool, H., Kratz, P. D. (1963). A generalization of the retention
       index system including linear temperature programmed gas-liquid partition
       chromatography. Journal of Chromatography 11, 463-471.
       https://doi.org/10.1016/S0021-9673(01)80947-X

    Examples
    --------
    >>> float(ecl_vandendool1963(np.array([25.0]), np.array([10.0, 40.0]), np.array([16, 18]))[0])
    17.0
    """
    return _piecewise(np.asarray(retention_time_min, dtype=float),
                      np.asarray(anchor_retention_time_min, dtype=float),
                      np.asarray(anchor_carbons, dtype=float))


#: Molar mass of the reference ester of the correction factors, methyl palmitate (C16:0,
#: C17H34O2) [g/mol]; the same value as the species table.
REFERENCE_MOLAR_MASS_G_MOL = 270.457
#: Active carbons of methyl palmitate: 16 (15 chain carbons + methoxy; carbonyl excluded).
REFERENCE_ACTIVE_CARBONS = 16


def tcf_ackman1964(
    fame_molar_mass_g_mol: np.ndarray,
    acid_carbons: np.ndarray,
) -> np.ndarray:
    r"""Theoretical FID correction factor of a methyl ester, relative to methyl palmitate.

    .. math::

        TCF_i = \frac{M_i / n_i}{M_r / n_r}, \qquad w_i \propto A_i \, TCF_i

    with :math:`M` the methyl ester's molar mass and :math:`n` its active carbons: for
    a methyl ester the acid's carbon count (the methoxy carbon counts, the carbonyl
    carbon does not); the reference :math:`r` is methyl palmitate.

    Parameters
    ----------
    fame_molar_mass_g_mol : ndarray
        Molar mass of each methyl ester. [g/mol]
    acid_carbons : ndarray
        Carbon number of each ester's fatty acid (18 for methyl oleate). [1]

    Returns
    -------
    ndarray
        Mass correction factor: multiply a peak area by it before normalising. [1]

    Notes
    -----
    The flame-ionisation detector responds roughly to the number of carbons not bonded
    to oxygen (the effective-carbon-number idea of Ackman & Sipos); ISO 12966-4 and
    AOCS Ce 1h-05 tabulate factors of this form (theirs relative to methyl butanoate;
    the reference cancels when the areas are normalised). Double bonds are taken to
    respond like saturated carbons. Mark: MEMORY (the formula from the shared GC notes;
    no tabulated factor has been checked against it, so the formula itself is the
    source).

    References
    ----------
    .. [1] Ackman, R. G., Sipos, J. C. (1964). Application of specific response factors
       in the gas chromatographic analysis of methyl esters of fatty acids with flame
       ionization detectors. Journal of the American Oil Chemists' Society 41(5),
       377-378. https://doi.org/10.1007/BF02654818

    Examples
    --------
    >>> round(float(tcf_ackman1964(np.array([296.495]), np.array([18]))[0]), 4)
    0.9745
    """
    m = np.asarray(fame_molar_mass_g_mol, dtype=float)
    n = np.asarray(acid_carbons, dtype=float)
    return (m / n) / (REFERENCE_MOLAR_MASS_G_MOL / REFERENCE_ACTIVE_CARBONS)


def ester_content_en14103(
    total_area: np.ndarray,
    internal_standard_area: np.ndarray,
    internal_standard_mg: np.ndarray,
    sample_mass_mg: np.ndarray,
) -> np.ndarray:
    r"""FAME (ester) content by internal standard, as EN 14103 computes it.

    .. math::

        C = \frac{\sum A - A_{IS}}{A_{IS}} \cdot \frac{C_{IS} V_{IS}}{m} \cdot 100

    with :math:`\sum A` the total peak area in the integration window (internal
    standard included), :math:`A_{IS}` the internal standard's area, :math:`C_{IS} V_{IS}`
    the mass of internal standard added and :math:`m` the sample mass. Peak areas are
    used as measured, without response factors, as the standard does.

    Parameters
    ----------
    total_area : ndarray
        Sum of the peak areas in the integration window, internal standard included. [1]
    internal_standard_area : ndarray
        Area of the internal standard's peak, in the same area unit. [1]
    internal_standard_mg : ndarray
        Mass of internal standard added (concentration times volume of its solution). [mg]
    sample_mass_mg : ndarray
        Mass of the sample weighed in. [mg]

    Returns
    -------
    ndarray
        Ester content, mass fraction of the sample. [wt %]

    Notes
    -----
    EN 14103:2011 uses methyl nonadecanoate (C19:0) as internal standard and
    integrates from methyl caproate (C6:0) to methyl nervonate (C24:1); the 2003
    edition used methyl heptadecanoate (C17:0) from C14:0 to C24:1, which fails for
    lauric oils and for fats that contain C17 esters. The form is as widely reproduced;
    mark: MEMORY (not checked against the edition's wording). EN 14214 requires at
    least 96.5 % (m/m) (VERIFIED).

    References
    ----------
    .. [1] EN 14103:2011. Fat and oil derivatives - Fatty Acid Methyl Esters (FAME) -
       Determination of ester and linolenic acid methyl ester contents. CEN, Brussels.

    Examples
    --------
    Hand calculation: 250 mg sample, 50 mg internal standard, areas 1000 (total) and 50
    (internal standard): (1000 - 50) / 50 x 50 / 250 x 100 = 380 (a nonsense sample,
    but the arithmetic is plain).

    >>> float(ester_content_en14103(np.array([1000.0]), np.array([50.0]),
    ...                             np.array([50.0]), np.array([250.0]))[0])
    380.0
    """
    total = np.asarray(total_area, dtype=float)
    a_is = np.asarray(internal_standard_area, dtype=float)
    with np.errstate(divide="ignore", invalid="ignore"):
        return (total - a_is) / a_is * (np.asarray(internal_standard_mg, dtype=float)
                                        / np.asarray(sample_mass_mg, dtype=float)) * 100.0


def linolenic_en14103(
    linolenic_area: np.ndarray,
    total_area: np.ndarray,
    internal_standard_area: np.ndarray,
) -> np.ndarray:
    r"""Linolenic acid methyl ester content, as EN 14103 computes it from the same run.

    .. math::

        L = \frac{A_{C18:3}}{\sum A - A_{IS}} \cdot 100

    Parameters
    ----------
    linolenic_area : ndarray
        Area of the methyl linolenate (C18:3 n-3) peak. [1]
    total_area : ndarray
        Sum of the peak areas in the integration window, internal standard included. [1]
    internal_standard_area : ndarray
        Area of the internal standard's peak (0 if none was added). [1]

    Returns
    -------
    ndarray
        Linolenic acid methyl ester content. [wt %]

    Notes
    -----
    Areas as measured, no response factors. Mark: MEMORY (form from the shared GC
    notes). EN 14214 allows at most 12.0 % (m/m) (VERIFIED).

    References
    ----------
    .. [1] EN 14103:2011. Fat and oil derivatives - Fatty Acid Methyl Esters (FAME) -
       Determination of ester and linolenic acid methyl ester contents. CEN, Brussels.

    Examples
    --------
    >>> float(linolenic_en14103(np.array([95.0]), np.array([1000.0]), np.array([50.0]))[0])
    10.0
    """
    with np.errstate(divide="ignore", invalid="ignore"):
        return (np.asarray(linolenic_area, dtype=float)
                / (np.asarray(total_area, dtype=float)
                   - np.asarray(internal_standard_area, dtype=float)) * 100.0)
