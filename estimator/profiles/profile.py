"""The validated composition of one or more samples: the core type of fame-estimator.

A :class:`Profile` holds, for each sample, the mass % of every species of the
species table on the FAME basis (rows sum to 100), the sample's metadata
(feedstock, supplier, price, FFA ...) untouched, and a note of everything that was
done to the numbers on the way in (renormalisation, excluded unidentified mass,
basis conversion). It is built only through :meth:`Profile.from_frame` or
:meth:`Profile.from_oils`, which validate.

Unidentified mass (an ``other`` column) counts towards the sum check, is then
excluded, and the identified species are renormalised to 100; the note records
how much was excluded.
"""

from __future__ import annotations

from collections.abc import Iterable, Sequence
from dataclasses import dataclass, field

import numpy as np
import pandas as pd

from estimator.errors import ProfileError, UnknownNameError
from estimator.properties.descriptors import BASES, convert_basis
from estimator.tables import load_table, species_keys

__all__ = ["DEFAULT_SUM_TOLERANCE", "OIL_ALIASES", "Profile", "oil_names", "resolve_oil"]

#: Largest distance of a composition sum from 100 that is renormalised [percentage points].
DEFAULT_SUM_TOLERANCE = 2.0
#: Sums closer to 100 than this are rounding in the printed report: renormalised silently.
RENORMALISE_NOTE_ABOVE = 0.005


@dataclass(frozen=True)
class Profile:
    """Samples x species mass % on FAME basis, with metadata and provenance notes."""

    composition: pd.DataFrame
    metadata: pd.DataFrame = field(repr=False)
    notes: pd.Series = field(repr=False)
    source: str = ""
    rows: pd.Series = field(default=None, repr=False)  # type: ignore[assignment]
    #: Notes about the files read (e.g. which row held the header), one line each.
    file_notes: tuple[str, ...] = field(default=(), repr=False)

    # ------------------------------------------------------------------ build
    @classmethod
    def from_frame(
        cls,
        composition: pd.DataFrame,
        *,
        basis: str = "fame",
        sum_tolerance: float = DEFAULT_SUM_TOLERANCE,
        other: pd.Series | None = None,
        metadata: pd.DataFrame | None = None,
        source: str = "",
        rows: Sequence[int] | None = None,
        notes: Sequence[str] | None = None,
    ) -> Profile:
        """Validate a samples x species-key frame of mass % and build a Profile.

        Parameters
        ----------
        composition : DataFrame
            Index: sample ids; columns: species keys (any subset, any order). [wt %]
        basis : {'fame', 'fatty-acid', 'oil'}
            What the numbers are mass % of: methyl esters, free fatty acids, or the
            triglyceride oil. Converted exactly to the FAME basis.
        sum_tolerance : float
            Sums within this many points of 100 are renormalised with a note;
            beyond it the sample is refused. [percentage points]
        other : Series, optional
            Unidentified mass per sample (counted in the sum, then excluded). [wt %]
        metadata : DataFrame, optional
            Carried through untouched, same index.
        source, rows
            File label and the file row of each sample, for messages.
        """
        if basis not in BASES:
            raise UnknownNameError(f"unknown basis {basis!r}; use one of {', '.join(BASES)}")
        if not sum_tolerance >= 0:
            raise ProfileError(f"sum tolerance must be a non-negative number, got {sum_tolerance}")
        keys = species_keys()
        unknown = [c for c in composition.columns if c not in keys]
        if unknown:
            raise ProfileError(f"{_where(source)}not species keys: {', '.join(map(str, unknown))}")
        n = len(composition)
        label = source or "input"
        if n == 0:
            raise ProfileError(f"{label}: no samples")
        ids = composition.index
        if ids.dtype != object or not all(isinstance(i, str) for i in ids[:1]):
            ids = ids.astype(str)
        ids = pd.Index(ids, name="sample", dtype=object)
        rows_s = pd.Series(
            np.asarray(rows) if rows is not None else np.arange(1, n + 1), index=ids
        )
        dup = ids[ids.duplicated()]
        if len(dup):
            first = dup[0]
            where = ", ".join(f"row {r}" for r in rows_s[ids == first].tolist())
            raise ProfileError(f"{_where(source)}duplicate sample id {first!r} ({where})")
        values = np.zeros((n, len(keys)))
        position = {k: j for j, k in enumerate(keys)}
        for col in composition.columns:
            values[:, position[col]] = composition[col].to_numpy(dtype=float)
        values[np.isnan(values)] = 0.0
        extra = np.zeros(n) if other is None else np.nan_to_num(other.to_numpy(dtype=float))
        _check_negative(values, extra, ids, rows_s, keys, source)
        identified = values.sum(axis=1)
        total = identified + extra
        off = np.abs(total - 100.0) > sum_tolerance + 1e-9
        if off.any():
            i = int(np.argmax(off))
            if abs(total[i] - 1.0) <= max(0.02, sum_tolerance / 100.0):
                raise ProfileError(
                    f"{_where(source)}row {rows_s.iloc[i]} (sample {ids[i]!r}): composition "
                    f"sums to {total[i]:.4g}: looks like fractions: multiply by 100 or pass "
                    "--fractions"
                )
            raise ProfileError(
                f"{_where(source)}row {rows_s.iloc[i]} (sample {ids[i]!r}): composition sums to "
                f"{total[i]:.2f} wt%, more than {sum_tolerance:g} points from 100; "
                "add an 'other' column for unidentified peaks or raise --sum-tolerance"
            )
        if (identified <= 0).any():
            i = int(np.argmax(identified <= 0))
            raise ProfileError(
                f"{_where(source)}row {rows_s.iloc[i]} (sample {ids[i]!r}): no identified species"
            )
        notes_s = pd.Series([""] * n if notes is None else list(notes), index=ids, dtype=object)
        excluded = extra > 0
        renormed = ~excluded & (np.abs(identified - 100.0) > RENORMALISE_NOTE_ABOVE)
        if excluded.any():
            notes_s[excluded] = _join(
                notes_s[excluded],
                [f"{v:.2f} wt% unidentified excluded, rest renormalised to 100"
                 for v in extra[excluded]],
            )
        if renormed.any():
            notes_s[renormed] = _join(
                notes_s[renormed],
                [f"sum {v:.2f} renormalised to 100" for v in identified[renormed]],
            )
        values *= (100.0 / identified)[:, None]  # in place: no second (n, species) array
        if basis != "fame":
            values = convert_basis(values, basis, "fame")
            notes_s[:] = _join(notes_s, [f"converted from {basis} basis"] * n)
        values.setflags(write=False)
        frame = pd.DataFrame(values, index=ids, columns=list(keys), copy=False)
        meta = (
            pd.DataFrame(index=ids)
            if metadata is None
            else metadata.set_axis(ids, axis=0).copy()
        )
        return cls(frame, meta, notes_s, source, rows_s)

    @classmethod
    def from_oils(cls, names: Iterable[str]) -> Profile:
        """Typical profiles of built-in feedstocks by name (see ``fame-estimator oils``)."""
        table = load_table("feedstocks")
        rows, picked = [], []
        for name in names:
            key = resolve_oil(name)
            picked.append(key)
            rows.append(table.loc[table["oil"] == key].iloc[0])
        df = pd.DataFrame(rows).set_index("oil")
        keys = [k for k in species_keys() if k in df.columns]
        comp = df[keys].astype(float).fillna(0.0)
        other = df["other"].astype(float).fillna(0.0) if "other" in df.columns else None
        meta = pd.DataFrame(
            {"feedstock": df["feedstock"].to_numpy(), "profile_source": df["source"].to_numpy()},
            index=comp.index,
        )
        return cls.from_frame(
            comp, basis="fatty-acid", other=other, metadata=meta, source="built-in oils",
            sum_tolerance=10.0,
        )

    @classmethod
    def concat(cls, profiles: Sequence[Profile]) -> Profile:
        """Stack several profiles; sample ids must stay unique."""
        if len(profiles) == 1:
            return profiles[0]
        comp = pd.concat([p.composition for p in profiles])
        dup = comp.index[comp.index.duplicated()]
        if len(dup):
            raise ProfileError(
                f"sample id {dup[0]!r} appears in more than one input; rename one of them"
            )
        meta = pd.concat([p.metadata for p in profiles])
        notes = pd.concat([p.notes for p in profiles])
        rows = pd.concat([p.rows for p in profiles])
        file_notes = tuple(n for p in profiles for n in p.file_notes)
        return cls(comp, meta, notes, ", ".join(p.source for p in profiles), rows, file_notes)

    # ------------------------------------------------------------------ views
    @property
    def samples(self) -> list[str]:
        """Sample ids in order."""
        return self.composition.index.tolist()

    @property
    def wt_pct(self) -> np.ndarray:
        """FAME mass % as an (n_samples, n_species) array in species-table order."""
        return self.composition.to_numpy(dtype=float)

    def __len__(self) -> int:
        return len(self.composition)

    def present_species(self, threshold: float = 0.0) -> list[str]:
        """Species keys above ``threshold`` wt % in at least one sample."""
        mask = (self.composition > threshold).any(axis=0)
        return list(self.composition.columns[mask])

    def on_basis(self, basis: str) -> pd.DataFrame:
        """The composition converted to another basis (fame, fatty-acid or oil) [wt %]."""
        return pd.DataFrame(
            convert_basis(self.wt_pct, "fame", basis),
            index=self.composition.index,
            columns=self.composition.columns,
        )

    def subset(self, samples: Sequence[str]) -> Profile:
        """A profile with only the named samples, in that order."""
        idx = list(samples)
        return Profile(
            self.composition.loc[idx],
            self.metadata.loc[idx],
            self.notes.loc[idx],
            self.source,
            self.rows.loc[idx],
            self.file_notes,
        )


def oil_names() -> list[str]:
    """Names of the built-in feedstock profiles."""
    return list(load_table("feedstocks")["oil"])


def _oil_key(name: str) -> str:
    return "".join(ch for ch in name.lower() if ch.isalnum())


#: Names people type for the built-in oils (trade names, other languages' crop names,
#: abbreviations), folded like :func:`_oil_key`. Canola is the low-erucic rapeseed
#: (common practice); tallow without an animal is taken as beef tallow, the usual
#: meaning in the trade (common practice).
OIL_ALIASES = {
    "canola": "rapeseed", "canolaoil": "rapeseed", "lowerucicrapeseed": "rapeseed",
    "lear": "rapeseed", "rape": "rapeseed", "rapeseedoil": "rapeseed",
    "oilseedrape": "rapeseed", "colza": "rapeseed",
    "higherucicrapeseed": "rapeseed-high-erucic", "hear": "rapeseed-high-erucic",
    "soy": "soybean", "soya": "soybean", "soyoil": "soybean", "soyaoil": "soybean",
    "soybeanoil": "soybean",
    "sunflowerseed": "sunflower", "sunfloweroil": "sunflower",
    "higholeicsunflower": "sunflower-high-oleic", "hoso": "sunflower-high-oleic",
    "palmoil": "palm", "pko": "palm-kernel", "palmkerneloil": "palm-kernel",
    "maize": "corn", "cornoil": "corn", "maizeoil": "corn",
    "groundnut": "peanut", "groundnutoil": "peanut", "peanutoil": "peanut",
    "flax": "linseed", "flaxseed": "linseed", "linseedoil": "linseed",
    "higholeicsafflower": "safflower-high-oleic",
    "tallow": "beef-tallow", "beeftallow": "beef-tallow", "beeffat": "beef-tallow",
    "porkfat": "lard", "pigfat": "lard",
    "choicewhitegrease": "white-grease", "cwg": "white-grease",
    "chickenfat": "poultry-fat", "poultry": "poultry-fat",
    "uco": "used-cooking-oil", "usedcookingoil": "used-cooking-oil",
    "wco": "used-cooking-oil", "wastecookingoil": "used-cooking-oil",
    "yellowgrease": "used-cooking-oil", "usedfryingoil": "used-cooking-oil",
}

#: The crop (or animal) each built-in oil comes from; a suggestion for an unknown
#: name stays within the crop the name mentions.
_CROP_WORDS = {
    "soy": "soybean", "rape": "rapeseed", "canola": "rapeseed", "sunflower": "sunflower",
    "palm": "palm", "coconut": "coconut", "corn": "corn", "maize": "corn",
    "cotton": "cottonseed", "peanut": "peanut", "groundnut": "peanut", "olive": "olive",
    "safflower": "safflower", "linseed": "linseed", "flax": "linseed", "jatropha": "jatropha",
    "camelina": "camelina", "tallow": "beef-tallow", "beef": "beef-tallow", "lard": "lard",
    "pork": "lard", "grease": "white-grease", "poultry": "poultry-fat",
    "chicken": "poultry-fat", "cooking": "used-cooking-oil", "frying": "used-cooking-oil",
}


#: Crops with no built-in profile: a name mentioning one gets no suggestion (a near
#: spelling such as grapeseed / rapeseed is another crop, not a typo).
_OTHER_CROPS = ("grape", "mustard", "hemp", "rice", "tung", "castor", "alga", "karanja",
                "pongamia", "neem", "rubber", "sesame", "walnut", "almond", "avocado",
                "babassu", "tobacco", "fish", "moringa", "crambe", "carinata", "pennycress",
                "cashew", "macadamia", "shea", "cocoa", "mahua", "yellowhorn")


def resolve_oil(name: str) -> str:
    """The built-in oil a typed name means (its own name or an alias such as ``canola``).

    Raises
    ------
    UnknownNameError
        An unknown name; suggestions, if any, are oils of the crop the name mentions
        (or a near spelling of one oil), never another crop.

    Examples
    --------
    >>> resolve_oil("Canola"), resolve_oil("UCO"), resolve_oil("tallow")
    ('rapeseed', 'used-cooking-oil', 'beef-tallow')
    """
    oils = oil_names()
    lookup = {_oil_key(n): n for n in oils}
    key = _oil_key(str(name))
    if key in lookup:
        return lookup[key]
    if key.endswith("oil") and key[:-3] in lookup:
        return lookup[key[:-3]]
    if key in OIL_ALIASES:
        return OIL_ALIASES[key]
    raise UnknownNameError(
        f"unknown oil {name!r}{_oil_hint(str(name), oils)}; 'fame-estimator oils' lists the "
        "built-in oils"
    )


def _oil_hint(name: str, oils: list[str]) -> str:
    import re

    key = _oil_key(name)
    tokens = re.findall(r"[a-z]+", name.lower())
    crops = {crop for word, crop in _CROP_WORDS.items()
             if any(t.startswith(word) or t.endswith(word) for t in tokens)}
    if any(t.startswith(c) or t.endswith(c) for t in tokens for c in _OTHER_CROPS):
        return ""
    if crops:
        family = {c.split("-")[0] for c in crops}
        close = [o for o in oils if o in crops or o.split("-")[0] in family]
    else:
        import difflib

        lookup = {_oil_key(n): n for n in oils}
        close = [lookup[c] for c in difflib.get_close_matches(key, list(lookup), n=1,
                                                              cutoff=0.85)]
    return f"; close matches: {', '.join(close)}" if close else ""


def _where(source: str) -> str:
    return f"{source}: " if source else ""


def _join(existing: pd.Series, new: list[str]) -> list[str]:
    return [f"{a}; {b}" if a else b for a, b in zip(existing.tolist(), new, strict=True)]


def _check_negative(values, extra, ids, rows, keys, source) -> None:
    bad = values < 0
    if bad.any():
        i, j = np.argwhere(bad)[0]
        raise ProfileError(
            f"{_where(source)}row {rows.iloc[i]}, column {keys[j]!r} (sample {ids[i]!r}): "
            f"negative value {values[i, j]:g}"
        )
    if (extra < 0).any():
        i = int(np.argmax(extra < 0))
        raise ProfileError(
            f"{_where(source)}row {rows.iloc[i]}, column 'other' (sample {ids[i]!r}): "
            f"negative value {extra[i]:g}"
        )
