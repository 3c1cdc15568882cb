"""Oxidation stability of FAME: a fitted Rancimat correlation and oxidizability indicators.

:func:`park2008` estimates the Rancimat induction period at 110 degC (EN 14112 /
EN 15751), in hours. The two ``*_indicator`` functions are *indicators*: a
linoleate-equivalent mass % that ranks profiles by how fast they oxidise. They
are not fitted to induction periods and must not be read as hours.
"""

from __future__ import annotations

import numpy as np

__all__ = [
    "PARK2008_X_RANGE_WT_PCT",
    "knothe2002_indicator",
    "mccormick2007_indicator",
    "park2008",
]

# Park et al. 2008, Rancimat induction period against C18:2 + C18:3 (MEMORY).
PARK2008_A = 117.9295  # [h wt %]
PARK2008_B = 2.5905  # [h]
#: X range spanned by the blends Park et al. fitted (palm, rapeseed and soybean
#: esters): DERIVED from the typical profiles of standards.md 4.2 (palm 9.8,
#: soybean 61.1 wt %); the paper's own range was not recorded.
PARK2008_X_RANGE_WT_PCT = (9.0, 62.0)


def park2008(linoleic_linolenic_wt_pct):
    r"""Rancimat induction period at 110 degC from C18:2 + C18:3 (Park 2008).

    .. math::

        OS = \frac{117.9295}{X} + 2.5905,\qquad X = A_{C18:2} + A_{C18:3}

    Parameters
    ----------
    linoleic_linolenic_wt_pct : array_like
        X, the summed mass % of methyl linoleate and methyl linolenate. [wt %]

    Returns
    -------
    oxidation_stability_110C_h : ndarray
        Induction period (EN 14112 Rancimat, 110 degC) of the ester without
        antioxidant. NaN where X = 0, where the equation has a pole. [h]

    Notes
    -----
    Fitted on blends of palm, rapeseed and soybean methyl esters, i.e. X of
    roughly 9-62 wt % (``PARK2008_X_RANGE_WT_PCT``, DERIVED); the registry
    flags X outside that range and profiles with esters of four or more
    double bonds, which the X variable ignores (neat C20:4 and C22:6 esters
    have induction periods below 0.1 h, VERIFIED [S13]). Published fit
    R^2 about 0.975 (**MEMORY**). Equation: **MEMORY**. Natural or added
    antioxidants dominate real induction periods; this is the fatty-acid
    contribution only.

    References
    ----------
    .. [1] Park J.-Y., Kim D.-K., Lee J.-P., Park S.-C., Kim Y.-J., Lee
       J.-S., "Blending effects of biodiesels on oxidation stability and low
       temperature flow properties", Bioresour. Technol. 99 (2008) 1196-1203 (from memory).

    Examples
    --------
    Rapeseed methyl ester, X = 19.0 + 8.5 = 27.5 (our arithmetic):

    >>> round(float(park2008(27.5)), 2)
    6.88
    >>> park2008([0.0, 50.0])
    array([  nan, 4.9491...])
    """
    x = np.asarray(linoleic_linolenic_wt_pct, dtype=float)
    # X below 1e-9 wt % is zero for any GC; the quotient would only overflow there
    ratio = np.divide(PARK2008_A, x, out=np.full(x.shape, np.nan), where=x > 1e-9)
    return ratio + PARK2008_B


def mccormick2007_indicator(oxidizability):
    r"""Oxidizability indicator: McCormick's OX as linoleate-equivalent mass %.

    .. math::

        I_{OX} = 100\,OX = 0.02\,A_{C18:1} + A_{C18:2} + 2\,A_{C18:3}

    Parameters
    ----------
    oxidizability : array_like
        McCormick et al. oxidizability OX (the ``oxidizability`` descriptor,
        a fraction). [1]

    Returns
    -------
    oxidizability_indicator_wt_pct : ndarray
        Mass % of methyl linoleate that would oxidise as fast as the
        profile; higher means less stable. An indicator, not an induction
        period. [wt %]

    Notes
    -----
    Weights 0.02 : 1 : 2 after Neff et al. 1992 (**MEMORY**); the relative
    autoxidation rates of purified oleate, linoleate and linolenate esters,
    1 : 41 : 98 (Dunn 2008 as quoted by Refaat 2009, VERIFIED [S19]), are of
    the same order. Covers C18 esters only; longer polyenes are not counted
    (use :func:`knothe2002_indicator` for fish or algal profiles). No fitted
    domain and no error: it is a ranking index.

    References
    ----------
    .. [1] McCormick R.L., Ratcliff M., Moens L., Lawrence R., "Several
       factors affecting the stability of biodiesel in standard accelerated
       tests", Fuel Process. Technol. 88 (2007) 651-657 (from memory).
    .. [2] Neff W.E., Selke E., Mounts T.L., Rinsch W., Frankel E.N., Zeitoun
       M.A.M., J. Am. Oil Chem. Soc. 69 (1992) 111-118 (from memory).

    Examples
    --------
    Soybean-like ester, OX = (0.02 x 23.7 + 54.3 + 2 x 6.8)/100 (our
    arithmetic):

    >>> round(float(mccormick2007_indicator(0.68374)), 3)
    68.374
    """
    return 100.0 * np.asarray(oxidizability, dtype=float)


def knothe2002_indicator(bape_wt_pct):
    r"""Oxidizability indicator: bis-allylic position equivalents (Knothe 2002).

    .. math::

        I_{BAPE} = BAPE = \sum_i n_{bis,i}\,A_i

    Parameters
    ----------
    bape_wt_pct : array_like
        Bis-allylic position equivalents (the ``bape_wt_pct`` descriptor:
        C18:2 counts 1, C18:3 2, C20:4 3, C22:6 5 per mass %). [wt %]

    Returns
    -------
    oxidizability_indicator_wt_pct : ndarray
        Linoleate-equivalent mass % (one bis-allylic CH2 per linoleate);
        higher means less stable. An indicator, not an induction period.
        [wt %]

    Notes
    -----
    Knothe proposed APE and BAPE as structure indices in place of the iodine
    value (concept VERIFIED [S18]; formula **MEMORY**). It counts every
    methylene-interrupted polyene, so unlike :func:`mccormick2007_indicator`
    it ranks fish and algal profiles too. No fitted domain and no error.

    References
    ----------
    .. [1] Knothe G., "Structure indices in FA chemistry. How relevant is the
       iodine value?", J. Am. Oil Chem. Soc. 79 (2002) 847-854 (pages from
       memory).

    Examples
    --------
    Soybean-like ester, BAPE = 54.3 + 2 x 6.8 (our arithmetic):

    >>> round(float(knothe2002_indicator(67.9)), 1)
    67.9
    """
    return np.asarray(bape_wt_pct, dtype=float) * 1.0
