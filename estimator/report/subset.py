"""A readable subset of many lots for the charts and the HTML report.

A comparison of 2,000 or 20,000 lots cannot be read lot by lot on a chart or a
web page, and drawing them all takes minutes and gigabytes. The charts and the
report show the best-ranked lots and the first of the failing ones, and say how
many others there are; the CSV and XLSX files keep every lot.
"""

from __future__ import annotations

from dataclasses import replace

import numpy as np

__all__ = ["MAX_LOTS_SHOWN", "readable_subset", "subset_comparison"]

#: Most lots drawn in a per-lot chart or listed in the report's tables.
MAX_LOTS_SHOWN = 30


def readable_subset(overall, limit: int = MAX_LOTS_SHOWN) -> tuple[np.ndarray, str]:
    """Positions (in ranked order) of the lots to show, and a note saying what was left out.

    Parameters
    ----------
    overall : sequence of str
        The overall verdict of each lot, in ranked order ('meets', 'too close to
        call', 'fails', ...).
    limit : int
        Most lots shown; with more, the first half of the places go to the best-ranked
        lots and the rest to the best-ranked of those that fail.

    Returns
    -------
    positions : ndarray of int
        Ranked positions of the lots shown, ascending.
    note : str
        Empty when every lot is shown; else one sentence for captions and the report.

    Examples
    --------
    >>> pos, note = readable_subset(["meets"] * 5 + ["fails"] * 5, limit=4)
    >>> pos.tolist()
    [0, 1, 5, 6]
    >>> note[:60]
    '4 of 10 lots shown: the 2 best ranked and 2 of the 5 that fa'
    """
    verdicts = np.asarray(list(overall), dtype=object)
    n = len(verdicts)
    if n <= limit:
        return np.arange(n), ""
    failing = np.flatnonzero(verdicts == "fails")
    best = np.arange(min(limit // 2, n))
    fail_pick = failing[~np.isin(failing, best)][: limit - len(best)]
    chosen = np.union1d(best, fail_pick)
    if len(chosen) < limit:  # few failing lots: fill with the next best
        rest = np.setdiff1d(np.arange(n), chosen)[: limit - len(chosen)]
        chosen = np.union1d(chosen, rest)
    n_best = len(chosen) - len(fail_pick)
    if len(fail_pick):
        what = (f"the {n_best} best ranked and {len(fail_pick)} of the {len(failing)} that "
                "fail")
    else:
        what = f"the {n_best} best ranked"
    note = (f"{len(chosen)} of {n} lots shown: {what}; the other {n - len(chosen)} are in the "
            "tables (comparison.csv, comparison.xlsx).")
    return chosen.astype(int), note


def subset_comparison(comparison, limit: int = MAX_LOTS_SHOWN):
    """The comparison restricted to :func:`readable_subset` of its lots, and the note.

    Every per-lot table (ranked, verdicts, estimates, valuation, flags, profile) keeps
    only the lots shown; the limits, methods and assumptions stay whole.
    """
    ranked = comparison.ranked
    positions, note = readable_subset(ranked["overall"], limit)
    if not note:
        return comparison, ""
    shown = ranked.iloc[positions]
    lots = list(shown["sample"])
    keep = set(lots)

    def rows(frame):
        if frame is None or "sample" not in frame.columns:
            return frame
        return frame[frame["sample"].isin(keep)]

    return replace(
        comparison, ranked=shown, verdicts=rows(comparison.verdicts),
        estimates=rows(comparison.estimates), valuation=rows(comparison.valuation),
        flags=rows(comparison.flags), profile=comparison.profile.subset(lots),
    ), note
