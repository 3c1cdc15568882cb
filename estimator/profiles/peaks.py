"""From a gas chromatograph's peak table to a profile, an ester content and a peak list.

A FAME run on a flame-ionisation detector (FID) exports one row per integrated peak:
a retention time and an area, sometimes a name. :func:`read_peaks` does the rest:

1. **Read** peak tables (CSV, TSV, XLSX or JSON): ``sample``, ``retention_time_min``,
   ``area`` and optional ``name``, ``height``, ``area_pct`` (common spellings such as
   ``RT``, ``Ret. Time``, ``Area``, ``Peak Name`` are read too). Without a ``sample``
   column a file holds one sample named after the file.
2. **Identify** each peak against the user's reference run of a known FAME mixture
   (``name``, ``retention_time_min``; names through the species-name parser). The
   saturated methyl esters found in both runs carry the reference's retention scale
   over to the sample run by equivalent chain length (Miwa et al. 1960; linear form of
   van den Dool & Kratz 1963 selectable), which absorbs drift; a peak then matches a
   reference peak within the retention-time window. Peaks matching nothing are
   *unidentified*; a peak within two reference windows, or two peaks within one, are
   *ambiguous* and never assigned. Peaks before the solvent cut-off are dropped with
   a note.
3. **Area to mass**: theoretical FID correction factors on the effective-carbon-number
   basis (as ISO 12966-4 / AOCS Ce 1h-05 tabulate them) or the user's measured
   response factors; the result says which.
4. **Internal standard** (EN 14103:2011 methyl nonadecanoate C19:0 by default; the
   2003 edition's methyl heptadecanoate C17:0 selectable) is removed from the profile;
   with a samples sheet (``sample``, ``sample_mass_mg``, ``internal_standard_mg``) the
   ester content is computed as EN 14103 does (areas as measured); the linolenic ester
   comes from the same run.

Nothing here prints. Every input problem is one line naming file, row and column.
"""

from __future__ import annotations

import re
from collections.abc import Sequence
from dataclasses import dataclass
from functools import cached_property
from pathlib import Path

import numpy as np
import pandas as pd

from estimator.errors import InputFileError, ProfileError, UnknownSpeciesError, UsageError
from estimator.profiles.gc_formulas import (
    _piecewise,
    ecl_miwa1960,
    ecl_vandendool1963,
    ester_content_en14103,
    linolenic_en14103,
    tcf_ackman1964,
)
from estimator.profiles.io import _check_unique_headers, _numbers, read_table
from estimator.profiles.names import OTHER, canonical_species
from estimator.profiles.profile import Profile

__all__ = [
    "DEFAULT_WINDOW_MIN",
    "EN14103_REPEATABILITY_WT_PCT",
    "INTERNAL_STANDARDS",
    "PeakReading",
    "Reference",
    "read_calibration",
    "read_peak_table",
    "read_peaks",
    "read_reference",
    "read_sample_sheet",
]

#: Internal standards EN 14103 names: key -> (edition, ester, acid carbons, first ester of
#: the integration window). MEMORY (shared GC notes): the 2011 edition integrates from
#: C6:0, the 2003 edition from C14:0, both to C24:1.
INTERNAL_STANDARDS = {
    "C19:0": ("EN 14103:2011", "methyl nonadecanoate", 19, "C6:0"),
    "C17:0": ("EN 14103:2003", "methyl heptadecanoate", 17, "C14:0"),
}
WINDOW_END = "C24:1"
#: Default half-width of the retention-time window around a reference peak [min]
#: (common practice for capillary FAME runs; set it to the run's peak widths).
DEFAULT_WINDOW_MIN = 0.05
#: Saturated esters are looked for within this many windows of their reference time.
ANCHOR_WINDOWS = 3.0
#: Repeatability of the EN 14103 ester content, about 1 % (m/m) absolute near 97 %.
#: MEMORY / common practice (shared GC notes): the default band of the EN 14214 verdict.
EN14103_REPEATABILITY_WT_PCT = 1.0
LINOLENIC = "C18:3"

# header spellings, compared after _header() folding
_SAMPLE = {"sample", "sample id", "sample name", "lot", "lot id", "injection", "data file"}
_RT = {"retention time min", "retention time", "ret time", "rt", "rt min", "r time",
       "retention", "time", "ret time min", "retention min"}
_AREA = {"area", "peak area", "area counts", "integrated area"}
_NAME = {"name", "peak name", "compound", "compound name", "component", "component name",
         "peak", "species", "identification"}
_HEIGHT = {"height", "peak height"}
_AREA_PCT = {"area pct", "area percent", "pct area", "peak area pct", "area pct of total"}
_SAMPLE_MASS = {"sample mass mg", "sample mass", "sample mg", "mass mg", "m mg"}
_IS_MASS = {"internal standard mg", "internal standard mass mg", "internal standard",
            "is mg", "is mass mg", "istd mg"}
_RF = {"response factor", "rf", "relative response factor", "rrf"}

_SATURATED_NAMES = {
    "butyric": 4, "butanoic": 4, "undecanoic": 11, "tridecanoic": 13, "pentadecanoic": 15,
    "heptadecanoic": 17, "margaric": 17, "nonadecanoic": 19, "heneicosanoic": 21,
    "tricosanoic": 23, "pentacosanoic": 25, "hexacosanoic": 26, "cerotic": 26,
}


# ------------------------------------------------------------------ reading
def _header(text: object) -> str:
    """Fold a header: lower case, units in brackets dropped, '%' as 'pct', punctuation as space."""
    h = str(text).strip().lower().replace("%", " pct ")
    h = re.sub(r"[\[(].*?[\])]", " ", h)
    return " ".join(re.sub(r"[^a-z0-9]+", " ", h).split())


def _find(table: pd.DataFrame, spellings: set[str]) -> str | None:
    for col in table.columns:
        if _header(col) in spellings:
            return col
    return None


def _load(path: Path) -> tuple[pd.DataFrame, np.ndarray]:
    table, first_row = read_table(path)
    table.columns = [str(c).strip() for c in table.columns]
    _check_unique_headers(table, path.name)
    return table.reset_index(drop=True), np.arange(first_row, first_row + len(table))


def _required(table, spellings, label, what, examples) -> str:
    col = _find(table, spellings)
    if col is None:
        raise InputFileError(f"{label}: no {what} column (expected {examples})")
    return col


def _cells(table, col, rows, label, *, positive: bool = False) -> np.ndarray:
    """Numbers of one column; blank or negative cells (zero too if ``positive``) are errors."""
    values = _numbers(table[col], label, col, rows)
    blank = np.isnan(values)
    bad = blank | (values <= 0 if positive else values < 0)
    if bad.any():
        i = int(np.argmax(bad))
        what = "empty cell" if blank[i] else (
            f"{values[i]:g} must be above 0" if positive else f"negative value {values[i]:g}")
        raise ProfileError(f"{label}: row {rows[i]}, column {col!r}: {what}")
    return values


def _texts(table, col, rows, label, what) -> list[str]:
    cells = table[col].map(lambda v: "" if v is None or (isinstance(v, float) and np.isnan(v))
                           else str(v).strip())
    blank = (cells == "").to_numpy()
    if blank.any():
        i = int(np.argmax(blank))
        raise ProfileError(f"{label}: row {rows[i]}, column {col!r}: empty {what}")
    return cells.tolist()


def read_peak_table(path: str | Path) -> pd.DataFrame:
    """Read one peak table into ``sample, retention_time_min, area, name, height, area_pct, row``.

    Without a sample column the file is one sample, named after the file's stem.
    ``name``, ``height`` and ``area_pct`` are empty when the file has none.
    """
    path = Path(path)
    label = path.name
    table, rows = _load(path)
    rt_col = _required(table, _RT, label, "retention-time",
                       "'retention_time_min', 'RT' or 'Ret. Time'")
    area_col = _required(table, _AREA, label, "peak-area", "'area' or 'Area'")
    sample_col = _find(table, _SAMPLE)
    out = pd.DataFrame({
        "sample": (_texts(table, sample_col, rows, label, "sample id") if sample_col
                   else [path.stem] * len(table)),
        "retention_time_min": _cells(table, rt_col, rows, label, positive=True),
        "area": _cells(table, area_col, rows, label),
    })
    name_col = _find(table, _NAME)
    out["name"] = (table[name_col].map(lambda v: "" if pd.isna(v) else str(v).strip())
                   if name_col else "")
    for key, spellings in (("height", _HEIGHT), ("area_pct", _AREA_PCT)):
        col = _find(table, spellings)
        out[key] = _numbers(table[col], label, col, rows) if col else np.nan
    out["row"] = rows
    out["file"] = label
    return out


def _saturated_carbons(text: str) -> int | None:
    """Carbon number of a saturated methyl ester name (``C19:0``, ``methyl nonadecanoate``)."""
    folded = " ".join(re.sub(r"[^a-z0-9:]+", " ", text.lower()).split())
    words = [w for w in folded.split() if w not in ("methyl", "acid", "ester", "me", "fame")]
    one = " ".join(words)
    m = re.fullmatch(r"c?\s?(\d{1,2}):0", one)
    if m:
        return int(m.group(1))
    if len(words) == 1:
        word = words[0][:-3] + "ic" if words[0].endswith("ate") else words[0]
        return _SATURATED_NAMES.get(word)
    return None


@dataclass(frozen=True)
class Reference:
    """A reference run: one row per named peak (key, role, retention time, carbons, row).

    ``role`` is ``species`` (a key of the species table), ``internal standard``, or
    ``not in profile`` (a saturated ester the species table lacks, e.g. C21:0).
    ``carbons`` is set for the saturated straight-chain esters, which anchor the ECL.
    """

    peaks: pd.DataFrame
    source: str
    internal_standard: str

    @cached_property
    def anchors(self) -> pd.DataFrame:
        """The saturated methyl esters of the reference, by retention time."""
        return self.peaks[self.peaks["carbons"].notna()].sort_values("retention_time_min")

    @cached_property
    def arrays(self) -> dict[str, np.ndarray]:
        """Columns as arrays: rt, key, role of every peak; anchor_rt, anchor_n."""
        return {"rt": self.peaks["retention_time_min"].to_numpy(dtype=float),
                "key": self.peaks["key"].to_numpy(dtype=object),
                "role": self.peaks["role"].to_numpy(dtype=object),
                "anchor_rt": self.anchors["retention_time_min"].to_numpy(dtype=float),
                "anchor_n": self.anchors["carbons"].to_numpy(dtype=float)}


def _check_internal_standard(internal_standard: str) -> str:
    key = internal_standard.strip().upper().replace(" ", "")
    key = key if key.startswith("C") else f"C{key}"
    if key not in INTERNAL_STANDARDS:
        raise UsageError(f"unknown internal standard {internal_standard!r}; use C19:0 "
                         "(EN 14103:2011, methyl nonadecanoate) or C17:0 (EN 14103:2003, "
                         "methyl heptadecanoate)")
    return key


def read_reference(path: str | Path, internal_standard: str = "C19:0") -> Reference:
    """Read a reference run (``name``, ``retention_time_min``) of a known FAME mixture.

    Names go through the species parser; the internal standard and saturated esters the
    species table lacks (C11:0, C13:0, C21:0 ...) are recognised as such. Two names at
    one retention time, a blank or unidentified-mass name, or an unknown species name
    are refused with one line naming file, row and column.
    """
    from estimator.tables import species_table

    is_key = _check_internal_standard(internal_standard)
    is_carbons = INTERNAL_STANDARDS[is_key][2]
    path = Path(path)
    label = path.name
    table, rows = _load(path)
    name_col = _required(table, _NAME, label, "peak-name", "'name' or 'Peak Name'")
    rt_col = _required(table, _RT, label, "retention-time",
                       "'retention_time_min', 'RT' or 'Ret. Time'")
    names = _texts(table, name_col, rows, label, "peak name")
    rt = _cells(table, rt_col, rows, label, positive=True)
    species = species_table()
    keys, roles, carbons = [], [], []
    for name, row in zip(names, rows):
        sat = _saturated_carbons(name)
        if sat == is_carbons:
            keys.append(is_key)
            roles.append("internal standard")
            carbons.append(float(sat))
            continue
        try:
            key = canonical_species(name)
        except UnknownSpeciesError as exc:
            if sat is None:
                raise UnknownSpeciesError(f"{label}: row {row}, column {name_col!r}: {exc}"
                                          ) from None
            keys.append(f"C{sat}:0")
            roles.append("not in profile")
            carbons.append(float(sat))
            continue
        if key == OTHER:
            raise ProfileError(f"{label}: row {row}, column {name_col!r}: {name!r} names no "
                               "ester; a reference run lists the known esters of its mixture")
        keys.append(key)
        roles.append("species")
        s = species.loc[key]
        plain = s["double_bonds"] == 0 and not s["trans"] and not s["hydroxyl"]
        carbons.append(float(s["carbons"]) if plain else np.nan)
    peaks = pd.DataFrame({"name": names, "key": keys, "role": roles,
                          "retention_time_min": rt, "carbons": carbons, "row": rows})
    order = np.argsort(rt, kind="stable")
    srt = rt[order]
    same = np.flatnonzero(np.isclose(np.diff(srt), 0.0, atol=5e-4))
    if len(same):
        a, b = order[same[0]], order[same[0] + 1]
        raise ProfileError(
            f"{label}: rows {min(rows[a], rows[b])} and {max(rows[a], rows[b])}, column "
            f"{rt_col!r}: two names ({names[a]!r}, {names[b]!r}) at {rt[a]:.3f} min; one "
            "retention time can carry one name"
        )
    anchors = peaks[peaks["carbons"].notna()].sort_values("retention_time_min")
    if not np.all(np.diff(anchors["carbons"].to_numpy()) > 0):
        raise ProfileError(f"{label}: the saturated esters do not elute in order of chain "
                           "length; check the retention times")
    return Reference(peaks, label, is_key)


def read_sample_sheet(path: str | Path) -> pd.DataFrame:
    """Read the samples sheet: ``sample``, ``sample_mass_mg``, ``internal_standard_mg``."""
    path = Path(path)
    label = path.name
    table, rows = _load(path)
    s_col = _required(table, _SAMPLE, label, "sample", "'sample'")
    m_col = _required(table, _SAMPLE_MASS, label, "sample-mass", "'sample_mass_mg'")
    i_col = _required(table, _IS_MASS, label, "internal-standard mass",
                      "'internal_standard_mg'")
    out = pd.DataFrame({
        "sample": _texts(table, s_col, rows, label, "sample id"),
        "sample_mass_mg": _cells(table, m_col, rows, label, positive=True),
        "internal_standard_mg": _cells(table, i_col, rows, label, positive=True),
        "row": rows,
    })
    dup = out["sample"].duplicated(keep=False)
    if dup.any():
        first = out.loc[dup, "sample"].iloc[0]
        where = ", ".join(str(r) for r in out.loc[out["sample"] == first, "row"])
        raise ProfileError(f"{label}: sample {first!r} appears more than once (rows {where})")
    return out.set_index("sample")


def read_calibration(path: str | Path) -> pd.Series:
    """Measured response factors (``name``, ``response_factor``), by species key.

    A factor is :math:`RF_i = (A_i/m_i)/(A_r/m_r)` from a calibration mixture of known
    composition (common practice); masses are then :math:`w_i \\propto A_i / RF_i`.
    """
    path = Path(path)
    label = path.name
    table, rows = _load(path)
    name_col = _required(table, _NAME, label, "name", "'name'")
    rf_col = _required(table, _RF, label, "response-factor", "'response_factor'")
    names = _texts(table, name_col, rows, label, "name")
    rf = _cells(table, rf_col, rows, label, positive=True)
    keys = []
    for name, row in zip(names, rows):
        try:
            key = canonical_species(name)
        except UnknownSpeciesError as exc:
            raise UnknownSpeciesError(f"{label}: row {row}, column {name_col!r}: {exc}"
                                      ) from None
        if key == OTHER or key in keys:
            why = "names no ester" if key == OTHER else f"repeats {key}"
            raise ProfileError(f"{label}: row {row}, column {name_col!r}: {name!r} {why}")
        keys.append(key)
    return pd.Series(rf, index=keys, name=label)


# ------------------------------------------------------------------ identification
def _ecl(rt, anchor_rt, anchor_n, method, dead_time_min):
    if method == "miwa1960":
        return ecl_miwa1960(rt, anchor_rt, anchor_n, dead_time_min=dead_time_min)
    return ecl_vandendool1963(rt, anchor_rt, anchor_n)


def _rt_at_ecl(ecl, anchor_rt, anchor_n, method, dead_time_min):
    """Inverse of :func:`_ecl` on one run's anchors: the retention time of a given ECL."""
    if method == "miwa1960":
        log_t = _piecewise(ecl, anchor_n, np.log(anchor_rt - dead_time_min))
        return np.exp(log_t) + dead_time_min
    return _piecewise(ecl, anchor_n, anchor_rt)


def _anchor_pairs(rt, reference, window, min_rt):
    """(sample rt, reference rt, carbons) of the saturated esters found once in the sample."""
    pairs = []
    arrays = reference.arrays
    for r_rt, n in zip(arrays["anchor_rt"], arrays["anchor_n"]):
        hit = np.flatnonzero(np.abs(rt - r_rt) <= ANCHOR_WINDOWS * window)
        if len(hit) == 1 and rt[hit[0]] > min_rt:
            pairs.append((rt[hit[0]], r_rt, n))
    pairs_a = np.array(pairs, dtype=float).reshape(-1, 3)
    if len(pairs_a) >= 2 and not (np.all(np.diff(pairs_a[:, 0]) > 0)):
        return pairs_a[:0]
    return pairs_a


@dataclass(frozen=True)
class PeakReading:
    """What :func:`read_peaks` found.

    Attributes
    ----------
    profile : Profile
        wt % on FAME basis per sample, internal standard removed; metadata carries
        ``ester_content_wt_pct`` (and its ``_error``) when a samples sheet was given,
        ``linolenic_wt_pct`` and ``unidentified_area_pct``.
    content : DataFrame
        One row per sample: ester content, linolenic ester, unidentified and ambiguous
        area, internal standard, integration window, factors used, notes.
    identification : DataFrame
        One row per peak: sample, file row, retention time, area, ECL, retention time on
        the reference's scale, status, species, candidates, applied factor, the file's
        own name for the peak.
    response_factors : str
        Which factors turned areas into masses.
    """

    profile: Profile
    content: pd.DataFrame
    identification: pd.DataFrame
    response_factors: str

    def table(self) -> pd.DataFrame:
        """The per-sample output: sample, species wt %, ester content, linolenic, unidentified."""
        comp = self.profile.composition
        comp = comp.loc[:, (comp > 0).any(axis=0)]
        out = comp.reset_index()
        c = self.content.set_index("sample").reindex(comp.index)
        for col in ("ester_content_wt_pct", "linolenic_wt_pct", "unidentified_area_pct"):
            out[col] = c[col].to_numpy()
        out["notes"] = self.profile.notes.reindex(comp.index).to_numpy()
        return out


def _factor_table(keys, calibration: pd.Series | None) -> dict[str, float]:
    """Mass factor of every reference key (NaN: a species the calibration file lacks)."""
    from estimator.tables import species_table

    table = species_table()
    out: dict[str, float] = {}
    for key in dict.fromkeys(keys):
        if calibration is not None and key in table.index:
            out[key] = 1.0 / calibration[key] if key in calibration.index else np.nan
        elif key in table.index:
            out[key] = float(tcf_ackman1964(table.at[key, "fame_molar_mass_g_mol"],
                                            table.at[key, "carbons"]))
        else:  # a saturated ester outside the species table: CnH2n+1COOCH3
            n = int(key[1:].split(":")[0])
            mass = (n + 1) * 12.011 + (2 * n + 2) * 1.008 + 2 * 15.999
            out[key] = float(tcf_ackman1964(mass, n))
    return out


def _factors(keys, factor_table: dict[str, float], source: str, sample: str) -> np.ndarray:
    """Mass factor per identified peak (NaN for peaks without a key)."""
    out = np.array([factor_table[k] if k else np.nan for k in keys], dtype=float)
    missing = [k for k, f in zip(keys, out) if k and np.isnan(f)]
    if missing:
        raise ProfileError(
            f"{source}: no response factor for {missing[0]} (identified in sample "
            f"{sample!r}); add a row, or leave out the calibration file to use the "
            "theoretical factors"
        )
    return out


def _identify(rt: np.ndarray, reference: Reference, window: float, cutoff: float,
              ecl_method: str, dead_time_min: float) -> tuple[dict, list[str]]:
    """Status, species and candidates of every peak of one sample (arrays by column)."""
    n = len(rt)
    notes: list[str] = []
    solvent = rt < cutoff
    if solvent.any():
        notes.append(f"{int(solvent.sum())} peak(s) before {cutoff:.2f} min dropped as solvent")
    ref = reference.arrays
    min_rt = max(cutoff, dead_time_min)
    pairs = _anchor_pairs(np.where(solvent, -np.inf, rt), reference, window, min_rt)
    ecl = np.full(n, np.nan)
    on_ref = rt.copy()
    live = ~solvent & (rt > dead_time_min)
    if len(pairs) >= 2:
        ecl[live] = _ecl(rt[live], pairs[:, 0], pairs[:, 2], ecl_method, dead_time_min)
        on_ref[live] = _rt_at_ecl(ecl[live], pairs[:, 1], pairs[:, 2], ecl_method,
                                  dead_time_min)
    else:
        if len(pairs) == 1:  # one saturated ester in both runs: correct a plain shift
            on_ref[live] = rt[live] + (pairs[0, 1] - pairs[0, 0])
            notes.append("one saturated ester found: retention times corrected by a shift "
                         "only")
        else:
            notes.append("no saturated ester found once: retention times compared as they "
                         "are, without drift correction")
        if len(ref["anchor_rt"]) >= 2:
            ecl[live] = _ecl(on_ref[live], ref["anchor_rt"], ref["anchor_n"], ecl_method,
                             dead_time_min)
    ref_rt = ref["rt"]
    near = (np.abs(on_ref[:, None] - ref_rt[None, :]) <= window) & ~solvent[:, None]
    count = near.sum(axis=1)
    single = count == 1
    claims = (near & single[:, None]).sum(axis=0)
    status = np.full(n, "unidentified", dtype=object)
    key = np.full(n, "", dtype=object)
    candidates = np.full(n, "", dtype=object)
    for i in np.flatnonzero(count >= 1):
        cols = np.flatnonzero(near[i])
        names = [ref["key"][j] for j in cols]
        if len(cols) > 1:
            status[i] = "ambiguous"
            candidates[i] = " or ".join(names)
        elif claims[cols[0]] > 1:
            status[i] = "ambiguous"
            others = np.flatnonzero(near[:, cols[0]] & single)
            candidates[i] = (f"{names[0]} (peaks at "
                             f"{', '.join(f'{rt[k]:.3f}' for k in others)} min)")
        else:
            role = ref["role"][cols[0]]
            status[i] = "identified" if role == "species" else role
            key[i] = names[0]
    status[solvent] = "solvent"
    for i in np.flatnonzero(status == "unidentified"):
        notes.append(f"unidentified peak at {rt[i]:.3f} min")
    amb = status == "ambiguous"
    if amb.any():
        notes.append(f"{int(amb.sum())} ambiguous peak(s) not assigned: "
                     + "; ".join(f"{rt[i]:.3f} min ({candidates[i]})" for i in np.flatnonzero(amb)))
    ident = {"ecl": ecl, "retention_on_reference_min": np.where(solvent, np.nan, on_ref),
             "status": status, "species": key, "candidates": candidates}
    return ident, notes


def _name_check(names: pd.Series, keys: np.ndarray, is_key: str) -> list[str]:
    """Compare the file's own peak names with the retention identification."""
    out = []
    for name, key, in zip(names, keys):
        if not name or not key:
            continue
        sat = _saturated_carbons(name)
        try:
            said = is_key if sat == int(is_key[1:3]) else canonical_species(name)
        except UnknownSpeciesError:
            continue
        if said != key and said != OTHER:
            out.append(f"the file names a peak {name!r}, retention says {key}")
    return out


def read_peaks(
    peak_files: str | Path | Sequence[str | Path],
    reference: str | Path | Reference,
    *,
    samples: str | Path | None = None,
    internal_standard: str = "C19:0",
    window_min: float = DEFAULT_WINDOW_MIN,
    solvent_cutoff_min: float | None = None,
    calibration: str | Path | None = None,
    ecl_method: str = "miwa1960",
    dead_time_min: float = 0.0,
    ester_repeatability_wt_pct: float = EN14103_REPEATABILITY_WT_PCT,
) -> PeakReading:
    """Read peak tables, identify the peaks and return the profile and EN 14103 contents.

    Parameters
    ----------
    peak_files : path or sequence of paths
        Peak tables (one file with a ``sample`` column, or one file per sample).
    reference : path or Reference
        The reference run of the known FAME mixture (see :func:`read_reference`).
    samples : path, optional
        Samples sheet (``sample``, ``sample_mass_mg``, ``internal_standard_mg``); without
        it no ester content is computed and the profile is still given.
    internal_standard : {'C19:0', 'C17:0'}
        EN 14103:2011 (methyl nonadecanoate) or the 2003 edition (methyl heptadecanoate).
    window_min : float
        Half-width of the retention window around each reference peak. [min]
    solvent_cutoff_min : float, optional
        Peaks before this time are dropped as solvent; default half the retention time
        of the first reference peak. [min]
    calibration : path, optional
        Measured response factors (see :func:`read_calibration`) instead of the
        theoretical correction factors.
    ecl_method : {'miwa1960', 'vandendool1963'}
        Logarithmic (isothermal) or linear (temperature-programmed) ECL interpolation.
    dead_time_min : float
        Column dead time for the logarithmic ECL. [min]
    ester_repeatability_wt_pct : float
        Band given to the ester content in verdicts (0 for none). [wt %]

    Returns
    -------
    PeakReading
    """
    if ecl_method not in ("miwa1960", "vandendool1963"):
        raise UsageError(f"unknown ECL method {ecl_method!r}; use miwa1960 or vandendool1963")
    if not window_min > 0:
        raise UsageError(f"the retention window must be above 0 min, got {window_min}")
    if not (dead_time_min >= 0 and ester_repeatability_wt_pct >= 0):
        raise UsageError("the dead time and the ester-content repeatability must be >= 0")
    is_key = _check_internal_standard(internal_standard)
    ref = reference if isinstance(reference, Reference) else read_reference(reference, is_key)
    if ref.internal_standard != is_key:
        raise UsageError(f"the reference was read for internal standard "
                         f"{ref.internal_standard}, not {is_key}")
    files = [peak_files] if isinstance(peak_files, (str, Path)) else list(peak_files)
    if not files:
        raise UsageError("give at least one peak table")
    tables = [read_peak_table(f) for f in files]
    seen: dict[str, str] = {}
    for t in tables:
        for s in dict.fromkeys(t["sample"]):
            if s in seen and seen[s] != t["file"].iat[0]:
                raise ProfileError(f"sample id {s!r} appears in {seen[s]} and "
                                   f"{t['file'].iat[0]}; rename one of them")
            seen[s] = t["file"].iat[0]
    peaks = pd.concat(tables, ignore_index=True)
    sheet = read_sample_sheet(samples) if samples is not None else None
    cal = read_calibration(calibration) if calibration is not None else None
    factor_table = _factor_table(ref.peaks["key"], cal)
    general: list[str] = []
    if is_key not in set(ref.peaks["key"]):
        general.append(f"the reference run does not list the internal standard {is_key}")
    first_ref = float(ref.peaks["retention_time_min"].min())
    cutoff = 0.5 * first_ref if solvent_cutoff_min is None else float(solvent_cutoff_min)
    if cutoff >= first_ref:
        raise UsageError(f"solvent cut-off {cutoff:g} min is not before the first reference "
                         f"peak ({first_ref:g} min)")
    factor_text = (f"measured response factors from {cal.name}" if cal is not None else
                   "theoretical FID correction factors (effective carbon number, as "
                   "ISO 12966-4 / AOCS Ce 1h)")
    start_key = INTERNAL_STANDARDS[is_key][3]
    ref_rt = dict(zip(ref.peaks["key"], ref.peaks["retention_time_min"]))
    start = ref_rt[start_key] - window_min if start_key in ref_rt else cutoff
    end = ref_rt[WINDOW_END] + window_min if WINDOW_END in ref_rt else np.inf
    window_text = (f"{start_key if start_key in ref_rt else 'solvent cut-off'} to "
                   f"{WINDOW_END if WINDOW_END in ref_rt else 'last peak'}")
    masses = ({} if sheet is None else
              dict(zip(sheet.index, zip(sheet["sample_mass_mg"], sheet["internal_standard_mg"]))))
    codes, uniques = pd.factorize(peaks["sample"], sort=False)
    order = np.argsort(codes, kind="stable")
    bounds = np.searchsorted(codes[order], np.arange(len(uniques) + 1))
    cols = {c: peaks[c].to_numpy() for c in ("retention_time_min", "area", "name", "row", "file")}
    idents, comps, others, rows, notes_all, content = [], [], [], [], [], []
    for number, sample in enumerate(uniques):
        idx = order[bounds[number]:bounds[number + 1]]
        rt = cols["retention_time_min"][idx].astype(float)
        area = cols["area"][idx].astype(float)
        ident, notes = _identify(rt, ref, window_min, cutoff, ecl_method, dead_time_min)
        notes = general + notes
        status, keys = ident["status"], ident["species"]
        factor = _factors(keys, factor_table, cal.name if cal is not None else "", sample)
        notes += _name_check(cols["name"][idx], keys, is_key)
        esters = (status != "solvent") & (status != "internal standard")
        unassigned = (status == "unidentified") | (status == "ambiguous")
        mass = np.where(esters, area * np.nan_to_num(factor, nan=1.0), 0.0)
        total_mass = mass.sum()
        if total_mass <= 0:
            raise ProfileError(f"{cols['file'][idx[0]]}: row {cols['row'][idx[0]]}: sample "
                               f"{sample!r} has no ester peaks after the solvent")
        pct = 100.0 * mass / total_mass
        in_profile = np.flatnonzero(status == "identified")
        comp: dict[str, float] = {}
        for i in in_profile:
            comp[keys[i]] = comp.get(keys[i], 0.0) + pct[i]
        comps.append(comp)
        others.append(max(0.0, 100.0 - pct[in_profile].sum()))
        rows.append(int(cols["row"][idx[0]]))
        ester_area = area[esters].sum()
        on_ref = ident["retention_on_reference_min"]
        in_window = (status != "solvent") & (on_ref >= start) & (on_ref <= end)
        total = area[in_window].sum()
        a_is = area[status == "internal standard"].sum()
        linolenic = float(linolenic_en14103(area[keys == LINOLENIC].sum(), total, a_is))
        ester = error = m_sample = m_is = np.nan
        if sheet is not None:
            if sample not in masses:
                notes.append(f"no row in {Path(samples).name}: ester content not computed")
            elif a_is <= 0:
                notes.append(f"internal standard {is_key} not found: ester content not "
                             "computed")
            else:
                m_sample, m_is = masses[sample]
                ester = float(ester_content_en14103(total, a_is, m_is, m_sample))
                error = ester_repeatability_wt_pct
        elif a_is <= 0:
            notes.append(f"internal standard {is_key} not found")
        after_solvent = area[status != "solvent"].sum()
        content.append({
            "sample": sample, "ester_content_wt_pct": ester, "ester_content_wt_pct_error": error,
            "linolenic_wt_pct": linolenic,
            "unidentified_area_pct": 100.0 * area[unassigned].sum() / ester_area,
            "ambiguous_area_pct": 100.0 * area[status == "ambiguous"].sum() / ester_area,
            "internal_standard": is_key, "internal_standard_area_pct": 100.0 * a_is / after_solvent,
            "sample_mass_mg": m_sample, "internal_standard_mg": m_is,
            "integration_window": window_text, "method": INTERNAL_STANDARDS[is_key][0],
            "response_factors": factor_text, "notes": "; ".join(notes),
        })
        notes_all.append("; ".join(notes))
        idents.append({
            "sample": np.full(len(idx), sample, dtype=object), "file": cols["file"][idx],
            "row": cols["row"][idx], "retention_time_min": rt, "area": area,
            "area_pct": 100.0 * area / after_solvent, "ecl": ident["ecl"],
            "retention_on_reference_min": on_ref, "status": status, "species": keys,
            "candidates": ident["candidates"], "mass_factor": factor,
            "in_ester_window": in_window, "name_in_file": cols["name"][idx],
        })
    content_df = pd.DataFrame(content)
    comp = pd.DataFrame.from_records(comps, index=list(uniques)).fillna(0.0)
    meta = content_df.set_index("sample")[
        ["ester_content_wt_pct", "ester_content_wt_pct_error", "linolenic_wt_pct",
         "unidentified_area_pct"]]
    profile = Profile.from_frame(
        comp, other=pd.Series(others, index=comp.index), metadata=meta,
        source=", ".join(dict.fromkeys(peaks["file"])), rows=rows, notes=notes_all,
    )
    identification = pd.DataFrame({c: np.concatenate([d[c] for d in idents]) for c in idents[0]})
    return PeakReading(profile, content_df, identification, factor_text)
