"""Map the species notations of GC reports and lab sheets to one species key.

A species key is a row of ``estimator/tables/species.csv``: a lipid number such
as ``C18:1``, with ``t`` for the trans row (``C18:1t``), ``OH`` for the hydroxy
row (``C18:1OH``), ``conj`` for the conjugated row (``C18:3conj``, eleostearic)
and an ``n`` suffix for a positional isomer that has a row of its own
(``C18:3n6``, ``C18:1n12`` petroselinic; plain ``C18:3`` is alpha-linolenic).

:func:`canonical_species` accepts

* lipid numbers with or without ``C``, spaces, ``C18_1``/``C18.1`` headers, and
  qualifiers before or after: ``n-9``, ``(n-9)``, ``omega-9``/``ω9``, ``cis-9``,
  ``c9``, ``9c``, ``9Z``, ``Δ9``/``delta-9``, ``t``, ``trans-9``, ``9t``,
  ``t9``, ``9E``, ``n9c``/``n9t``, ``OH``/``12-OH``, ``ME``, ``FAME``, ``methyl ester``;
* common, acid, systematic and methyl ester names from the table (``oleic``,
  ``oleic acid``, ``methyl oleate``, ``oleic acid methyl ester``,
  ``methyl cis-9-octadecenoate``, ``palmitic acid ME``, ``EPA``) and any
  systematic name built from a chain stem (``octadec-9-enoic acid``,
  ``(9Z,12Z)-octadeca-9,12-dienoic acid``, ``9-Octadecenoic acid, methyl ester, (E)-``);
* a name and a lipid number together, one in brackets, when both name the
  same species (``Oleic acid (C18:1)``, ``C20:5n3 (EPA)``).

Normalisation is deterministic: Unicode NFKC and case folding; Greek letters
become words (``α`` -> ``alpha``, ``γ`` -> ``gamma``, ``Δ`` -> ``delta``,
``ω`` -> ``omega``); every dash becomes ``-``; underscores, brackets and runs of
spaces (including non-breaking ones) are separators; invisible format characters
are dropped. In names the words ``acid``, ``methyl``, ``ester``, ``ME`` and
``FAME`` are dropped and an ester ending ``-ate`` reads as the acid ending ``-ic``.
Unit qualifiers such as ``wt%`` are not part of a species name.

Positional isomers. Double-bond positions count from the carboxyl end (``Δ9``,
``cis-9``); an ``n-``/``ω-`` value counts from the methyl end, so
``n = carbons - last double-bond position``. When the table has rows for more
than one positional isomer of a lipid number (``C18:3`` n-3 and ``C18:3n6``;
``C18:1`` n-9 and ``C18:1n12`` petroselinic), the positions or the ``n`` value
choose the row, and a bare lipid number means the plain key. A cis positional
isomer without a row of its own (``C18:1 n-7`` vaccenic, ``C20:1 n-11``) pools
into the plain lipid-number key; trans isomers pool the same way into the trans
row. A conjugated chain (``conj``, ``conjugated``, or positions two apart such
as ``9c,11t,13t``) chooses the conjugated row whatever its cis/trans marks. A
trans mark on a species whose table has no trans row (``C18:2 trans``) is an
error, as is a hydroxy mark on a species without a hydroxy row.

Unidentified mass. ``other``, ``others``, ``unidentified``, ``unknown``,
``not identified``, ``rest``, ``minor``, ``sum of minor peaks``,
``unidentified peaks`` and a few similar spellings map to :data:`OTHER`. The
profile layer excludes OTHER mass and renormalises the identified species to
100 %, so a reader can tell the user how much mass was set aside.

Examples
--------
>>> canonical_species("C18:1 (n-9)")
'C18:1'
>>> canonical_species("methyl cis-9-octadecenoate")
'C18:1'
>>> canonical_species("C18:3 cis-6,9,12")
'C18:3n6'
>>> canonical_species("C18:1 n-7")
'C18:1'
>>> canonical_species("18:1n-12"), canonical_species("C18:3 9c,11t,13t")
('C18:1n12', 'C18:3conj')
>>> canonical_species("sum of minor peaks")
'other'
>>> canonical_species("C19:0")
Traceback (most recent call last):
...
estimator.errors.UnknownSpeciesError: unknown species 'C19:0'; close matches: C18:0, C20:0
"""

from __future__ import annotations

import difflib
import re
import unicodedata
from dataclasses import dataclass
from functools import cache

import pandas as pd

from estimator.errors import UnknownSpeciesError
from estimator.tables import species_keys, species_table

__all__ = ["OTHER", "canonical_species", "is_species_like", "species_spellings"]

OTHER = "other"
"""The key for unidentified mass (``other``, ``unidentified``, ``rest`` ...)."""

_OTHER_SPELLINGS = (
    "other",
    "others",
    "other peaks",
    "other fatty acids",
    "unidentified",
    "unidentified peaks",
    "unknown",
    "unknowns",
    "unknown peaks",
    "not identified",
    "non identified",
    "rest",
    "remainder",
    "minor",
    "minors",
    "minor peaks",
    "minor components",
    "sum of minor peaks",
)

_DASHES = dict.fromkeys(
    map(ord, "\u2010\u2011\u2012\u2013\u2014\u2015\u2043\u2212\ufe58\ufe63"), "-"
)
_GREEK = (("α", "alpha"), ("β", "beta"), ("γ", "gamma"), ("δ", "delta"), ("ω", "omega"))
_ESTER_WORDS = frozenset({"acid", "methyl", "ester", "esters", "me", "fame", "fames"})

# A lipid number: ``C18:1``, ``18:1``, ``C 18 : 1``; or a ``C18_1``/``C18.1`` header.
_CORE = re.compile(
    r"(?<![a-z0-9.])(?:c\s*)?(\d{1,2})\s*:\s*(\d{1,2})(?!\d)"
    r"|(?<![a-z0-9.])c(\d{1,2})[_.](\d{1,2})(?![\d.])"
)

# One qualifier around a lipid number; scanned left to right, nothing may be left over.
_QUALIFIER = re.compile(
    r"""
     (?P<sep>[\s,\-+.:;()\[\]{}/_]+)
    |(?P<ester>methyl\s*esters?|fames?|esters?|methyl|me|acid)(?![a-z])
    |(?P<hyd>(?:\d{1,2}\s*-?\s*)?(?:oh|hydroxy))(?![a-z])
    |(?P<conj>conj(?:ugated)?)(?![a-z])
    |(?:n|omega|w)\s*-?\s*(?P<n>\d{1,2})(?P<ncfg>[ctze])?(?![a-z\d])
    |(?P<allcis>all\s*-?\s*(?:cis|z))(?![a-z])
    |(?P<cis>cis|z)(?![a-z])
    |(?P<trans>trans|e)(?![a-z])
    |(?P<delta>delta)
    |(?P<pcfg>[ct])(?P<ppos>\d{1,2})(?![a-z\d])
    |(?P<qpos>\d{1,2})(?P<qcfg>[ctze])(?![a-z\d])
    |(?P<pos>\d{1,2})(?![a-z\d])
    |(?P<c>c)(?![a-z])
    |(?P<t>t)(?![a-z])
    """,
    re.VERBOSE,
)

_STEMS = {
    "hex": 6, "hept": 7, "oct": 8, "non": 9, "dec": 10, "undec": 11, "dodec": 12,
    "tridec": 13, "tetradec": 14, "pentadec": 15, "hexadec": 16, "heptadec": 17,
    "octadec": 18, "nonadec": 19, "eicos": 20, "icos": 20, "heneicos": 21,
    "henicos": 21, "docos": 22, "tricos": 23, "tetracos": 24, "pentacos": 25,
    "hexacos": 26,
}  # fmt: skip
_UNSATURATION = {"an": 0, "en": 1, "dien": 2, "trien": 3, "tetraen": 4, "pentaen": 5, "hexaen": 6}
_SYSTEMATIC = re.compile(
    "(?P<stem>{})a?(?P<unsat>{})oic".format(
        "|".join(sorted(_STEMS, key=len, reverse=True)),
        "|".join(sorted(_UNSATURATION, key=len, reverse=True)),
    )
)

# Property units at the end of a column header (``cloud_point_C``, ``density_kg_m3``).
_PROPERTY_UNIT = re.compile(
    r"\s(?:deg\s*c|°\s*c|c|k|kg\s*m3|g\s*cm3|g\s*ml|mm2\s*s|cst|mpa\s*s|ppm|mg\s*kg"
    r"|mg\s*koh\s*g|g\s*i2\s*100\s*g|h|hr|hours|min|s|mj\s*kg|kj\s*kg|per\s*t|t|usd|eur"
    r"|g\s*mol|pa|kpa|bar)\s*\)?$"
)


@dataclass(frozen=True)
class _Row:
    """One species row, reduced to what the parser needs."""

    key: str
    carbons: int
    double_bonds: int
    trans: bool
    hydroxyl: bool
    delta: frozenset[int]

    @property
    def n(self) -> int | None:
        """Position of the last double bond counted from the methyl end."""
        return self.carbons - max(self.delta) if self.delta else None

    @property
    def conjugated(self) -> bool:
        """True for a conjugated chain (double bonds two carbons apart, e.g. 9,11,13)."""
        return _conjugated(self.delta)


def _conjugated(positions: frozenset[int]) -> bool:
    """Whether double-bond positions are conjugated: two or more, each two after the last."""
    p = sorted(positions)
    return len(p) >= 2 and all(b - a == 2 for a, b in zip(p, p[1:]))


@dataclass(frozen=True)
class _Spec:
    """A parsed notation: chain, unsaturation and any position or isomer marks."""

    carbons: int
    double_bonds: int
    positions: frozenset[int] = frozenset()
    n: int | None = None
    trans: bool = False
    hydroxyl: bool = False
    conjugated: bool = False


def _fold(text: str) -> str:
    """Unicode-normalise, case-fold and unify dashes, Greek letters and spaces."""
    folded = unicodedata.normalize("NFKC", text)
    folded = "".join(ch for ch in folded if unicodedata.category(ch) != "Cf")
    folded = folded.casefold().translate(_DASHES)
    for letter, word in _GREEK:
        folded = folded.replace(letter, word)
    return re.sub(r"\s+", " ", folded).strip()


def _name_tokens(folded: str) -> list[str]:
    """Words and numbers of a folded name, ester words dropped, ``-ate`` read as ``-ic``."""
    tokens = []
    for token in re.findall(r"[a-z]+|\d+", folded):
        if token in _ESTER_WORDS:
            continue
        if len(token) > 4 and token.endswith("ate"):
            token = token[:-3] + "ic"
        tokens.append(token)
    return tokens


def _compact(tokens: list[str]) -> str:
    """Join tokens without separators, keeping a comma between adjacent numbers."""
    out = ""
    for i, token in enumerate(tokens):
        if i and token.isdigit() and tokens[i - 1].isdigit():
            out += ","
        out += token
    return out


def _name_key(text: str) -> str:
    """The lookup form of a name: ``'Methyl α-Linolenate'`` -> ``'alphalinolenic'``."""
    return _compact(_name_tokens(_fold(text)))


def _int_set(value: object) -> frozenset[int]:
    """Parse a delta cell such as ``"9,12"`` (or an empty cell) into positions."""
    if value is None or (not isinstance(value, str) and pd.isna(value)):
        return frozenset()
    return frozenset(int(float(part)) for part in str(value).split(",") if part.strip())


@cache
def _rows() -> tuple[_Row, ...]:
    """The species table as parser rows, in canonical order."""
    table = species_table().loc[list(species_keys())]
    columns = zip(table.index, *(table[c].tolist() for c in  # columns, not cell by cell
                                 ("carbons", "double_bonds", "trans", "hydroxyl", "delta")))
    return tuple(
        _Row(key=str(key), carbons=int(carbons), double_bonds=int(double_bonds),
             trans=bool(trans), hydroxyl=bool(hydroxyl), delta=_int_set(delta))
        for key, carbons, double_bonds, trans, hydroxyl, delta in columns
    )


@cache
def _spellings() -> dict[str, str]:
    """Every spelling in the species table -> key; the first species wins a clash."""
    table = species_table().loc[list(species_keys())]
    spellings: dict[str, str] = {}
    columns = zip(table.index, *(table[c].tolist() for c in  # columns, not row by row
                                 ("common_name", "systematic_name", "synonyms", "fame_name")))
    for key, common, systematic, synonyms, fame_name in columns:
        names = [key, common, systematic]
        if isinstance(synonyms, str):
            names += [s.strip() for s in synonyms.split("|")]
        names += [fame_name, f"{common} acid", f"{systematic} acid"]
        for name in names:
            if isinstance(name, str) and name:
                spellings.setdefault(name, str(key))
    return spellings


def species_spellings() -> dict[str, str]:
    """Return every known spelling (keys, names, synonyms) mapped to its species key.

    Returns
    -------
    dict[str, str]
        A fresh dict, spelling -> key, in canonical species order.

    Examples
    --------
    >>> species_spellings()["methyl oleate"]
    'C18:1'
    """
    return dict(_spellings())


@cache
def _name_index() -> dict[str, str]:
    """Lookup form of every non-key spelling -> key."""
    keys = set(species_keys())
    index: dict[str, str] = {}
    for spelling, key in _spellings().items():
        if spelling not in keys:
            index.setdefault(_name_key(spelling), key)
    return index


@cache
def _name_display() -> dict[str, str]:
    """Lookup form -> the first spelling that produced it, for error messages."""
    keys = set(species_keys())
    display: dict[str, str] = {}
    for spelling in _spellings():
        if spelling not in keys:
            display.setdefault(_name_key(spelling), spelling)
    return display


@cache
def _other_index() -> frozenset[str]:
    """Lookup forms of the spellings of unidentified mass."""
    return frozenset(_name_key(s) for s in _OTHER_SPELLINGS)


def _core_numbers(core: re.Match[str]) -> tuple[int, int]:
    """Carbon number and double-bond count of a lipid-number match."""
    return int(core.group(1) or core.group(3)), int(core.group(2) or core.group(4))


def _parse_lipid(folded: str, core: re.Match[str]) -> _Spec | None:
    """Parse a lipid number and its qualifiers; None if anything is left unread."""
    carbons, double_bonds = _core_numbers(core)
    rest = f"{folded[: core.start()]} {folded[core.end() :]}"
    if _CORE.search(rest):  # two lipid numbers, e.g. co-eluting peaks
        return None
    positions: set[int] = set()
    n: int | None = None
    trans = hydroxyl = conjugated = False
    pos = 0
    while pos < len(rest):
        match = _QUALIFIER.match(rest, pos)
        if match is None:
            return None
        pos = match.end()
        groups = match.groupdict()
        if groups["hyd"]:
            hydroxyl = True
        elif groups["conj"]:
            conjugated = True
        elif groups["n"]:
            n = int(groups["n"])
            trans |= groups["ncfg"] in ("t", "e")
        elif groups["trans"] or groups["t"]:
            trans = True
        elif groups["ppos"]:
            positions.add(int(groups["ppos"]))
            trans |= groups["pcfg"] == "t"
        elif groups["qpos"]:
            positions.add(int(groups["qpos"]))
            trans |= groups["qcfg"] in ("t", "e")
        elif groups["pos"]:
            positions.add(int(groups["pos"]))
    return _Spec(carbons, double_bonds, frozenset(positions), n, trans, hydroxyl, conjugated)


def _parse_systematic(tokens: list[str]) -> _Spec | None:
    """Parse a systematic name such as ``12-hydroxy-cis-9-octadecenoic``; None if not one."""
    words: list[str] = []
    positions: set[int] = set()
    trans = hydroxyl = False
    for i, token in enumerate(tokens):
        after = tokens[i + 1] if i + 1 < len(tokens) else ""
        if token.isdigit():
            if len(token) > 2:
                return None
            if not (after.startswith("hydroxy") or after in ("r", "s")):
                positions.add(int(token))
        elif token in ("cis", "z", "c", "all", "delta", "r", "s", "rs"):
            continue
        elif token in ("trans", "e", "t"):
            trans = True
        elif token.startswith("hydroxy"):
            hydroxyl = True
            if token[len("hydroxy") :]:
                words.append(token[len("hydroxy") :])
        else:
            words.append(token)
    match = _SYSTEMATIC.fullmatch("".join(words))
    if match is None:
        return None
    return _Spec(
        carbons=_STEMS[match["stem"]],
        double_bonds=_UNSATURATION[match["unsat"]],
        positions=frozenset(positions),
        trans=trans,
        hydroxyl=hydroxyl,
    )


def _fail(text: str, reason: str) -> UnknownSpeciesError:
    """An error for a notation that parses but names no row of the table."""
    return UnknownSpeciesError(f"unknown species {text!r}: {reason}")


def _resolve(spec: _Spec, text: str) -> str:
    """Choose the species row a parsed notation names (see the module docstring)."""
    c, d = spec.carbons, spec.double_bonds
    label = f"C{c}:{d}"
    chain = [r for r in _rows() if r.carbons == c and r.double_bonds == d]
    if not chain:
        raise _unknown(text, (c, d, spec.trans, spec.hydroxyl))
    listed = ", ".join(str(p) for p in sorted(spec.positions))
    if spec.n is not None and d == 0:
        raise _fail(text, f"n-{spec.n} given for saturated {label}")
    if len(spec.positions) > d:
        raise _fail(text, f"too many double-bond positions for {label}: {listed}")
    for p in sorted(spec.positions):
        if not 1 <= p < c:
            raise _fail(text, f"double-bond position {p} does not fit {label}")
    if spec.n is not None and not 1 <= spec.n < c:
        raise _fail(text, f"n-{spec.n} does not fit {label}")
    n = spec.n
    if spec.positions and len(spec.positions) == d:
        implied = c - max(spec.positions)
        if n is not None and n != implied:
            raise _fail(text, f"n-{n} contradicts double-bond positions {listed} of {label}")
        n = implied
    candidates = [r for r in chain if r.hydroxyl == spec.hydroxyl]
    if not candidates:
        raise _fail(text, f"the species table has no hydroxy isomer of {label}")
    label += "OH" if spec.hydroxyl else ""
    conjugated = spec.conjugated or (len(spec.positions) == d and _conjugated(spec.positions))
    if conjugated:
        # a conjugated chain mixes cis and trans bonds (eleostearic 9c,11t,13t): the
        # conjugated row is chosen by the chain, whatever trans marks are written
        candidates = [r for r in candidates if r.conjugated]
        if not candidates:
            raise _fail(text, f"the species table has no conjugated isomer of {label}")
        return candidates[0].key if len(candidates) == 1 else _fail_ambiguous(text, candidates)
    candidates = [r for r in candidates if r.trans == spec.trans and not r.conjugated]
    if not candidates:
        raise _fail(text, f"the species table has no trans isomer of {label}")
    matches = [r for r in candidates if spec.positions <= r.delta and (n is None or r.n == n)]
    if len(matches) == 1:
        return matches[0].key
    plain = f"C{c}:{d}" + ("t" if spec.trans else "") + ("OH" if spec.hydroxyl else "")
    if any(r.key == plain for r in candidates):
        return plain
    if len(candidates) == 1:
        return candidates[0].key
    raise _fail(text, "ambiguous between " + ", ".join(r.key for r in candidates))


def _fail_ambiguous(text: str, rows: list[_Row]) -> str:
    """Raise the error for a notation that fits several rows equally."""
    raise _fail(text, "ambiguous between " + ", ".join(r.key for r in rows))


def _lipid_close(c: int, d: int, trans: bool, hydroxyl: bool) -> list[str]:
    """Keys near lipid number ``c:d``: same chain, else nearest chain length, else nearest d."""
    rows = _rows()
    same = [r.key for r in rows if r.carbons == c and r.double_bonds == d]
    if same:
        return same
    alike = [r for r in rows if r.trans == trans and r.hydroxyl == hydroxyl]
    by_chain = [(abs(r.carbons - c), r.key) for r in alike if r.double_bonds == d]
    by_bonds = [(abs(r.double_bonds - d), r.key) for r in alike if r.carbons == c]
    for ranked in (by_chain, by_bonds):
        near = [(distance, key) for distance, key in ranked if distance <= 2]
        if near:
            best = min(distance for distance, _ in near)
            return [key for distance, key in near if distance == best]
    return []


def _name_close(compact: str) -> list[str]:
    """Close spellings of a name by difflib, one per species, as ``spelling (key)``."""
    if not compact:
        return []
    index, display = _name_index(), _name_display()
    found: list[str] = []
    seen: set[str] = set()
    for near in difflib.get_close_matches(compact, list(index), n=6, cutoff=0.8):
        key = index[near]
        if key not in seen:
            seen.add(key)
            found.append(f"{display[near]} ({key})")
    return found[:3]


def _unknown(text: str, lipid: tuple[int, int, bool, bool] | None) -> UnknownSpeciesError:
    """The one-line error for a name that maps to no species, with close matches."""
    close = _lipid_close(*lipid) if lipid else _name_close(_name_key(text))
    if close:
        return UnknownSpeciesError(f"unknown species {text!r}; close matches: {', '.join(close)}")
    return UnknownSpeciesError(f"unknown species {text!r}; no close match in the species table")


def _canonical(text: str, split: bool) -> str | None:
    """Map one notation to a key; None when it is not understood at all."""
    folded = _fold(text)
    compact = _compact(_name_tokens(folded))
    if compact in _other_index():
        return OTHER
    if compact in _name_index():
        return _name_index()[compact]
    core = _CORE.search(folded)
    spec = _parse_lipid(folded, core) if core else _parse_systematic(_name_tokens(folded))
    if spec is not None:
        return _resolve(spec, text)
    bracketed = re.fullmatch(r"(.+?)\s*[(\[](.+)[)\]]", folded) if split else None
    if bracketed:
        try:
            keys = [_canonical(part, split=False) for part in bracketed.groups()]
        except UnknownSpeciesError:
            return None
        if None in keys:
            return None
        if keys[0] != keys[1]:
            raise _fail(text, f"its parts name different species, {keys[0]} and {keys[1]}")
        return keys[0]
    return None


def canonical_species(text: str) -> str:
    """Map a species notation from a GC report or lab sheet to its species key.

    Parameters
    ----------
    text : str
        A column header or cell such as ``"C18:1 (n-9)"``, ``"methyl oleate"``
        or ``"others"``.

    Returns
    -------
    str
        A key of the species table, or :data:`OTHER` for unidentified mass.

    Raises
    ------
    UnknownSpeciesError
        When the notation names no species of the table; the one-line message
        lists close matches or says there is none.

    Examples
    --------
    >>> canonical_species("Methyl Palmitate")
    'C16:0'
    >>> canonical_species("γ-linolenic acid")
    'C18:3n6'
    >>> canonical_species("t9-C18:1")
    'C18:1t'
    >>> canonical_species("C18:2 trans")
    Traceback (most recent call last):
    ...
    estimator.errors.UnknownSpeciesError: unknown species 'C18:2 trans': the species table has no trans isomer of C18:2
    """  # noqa: E501
    if not isinstance(text, str):
        raise UnknownSpeciesError(f"unknown species {text!r}; a species name must be text")
    key = _canonical(text, split=True)
    if key is not None:
        return key
    core = _CORE.search(_fold(text))
    raise _unknown(text, (*_core_numbers(core), False, False) if core else None)


@cache
def _one_word_names() -> frozenset[str]:
    """Lookup forms of the known names that are a single word."""
    return frozenset(k for k in _name_index() if k.isalpha())


def _looks_fatty(tokens: list[str]) -> bool:
    """True if raw name tokens carry a fatty-acid or methyl-ester word."""
    names = _one_word_names()
    for i, token in enumerate(tokens):
        after = tokens[i + 1] if i + 1 < len(tokens) else ""
        acid = token[:-3] + "ic" if len(token) > 4 and token.endswith("ate") else token
        if acid in names or _SYSTEMATIC.fullmatch(acid.removeprefix("hydroxy")):
            return True
        if len(token) > 3 and token.endswith("ic") and after in ("acid", "me", "fame", "methyl"):
            return True
        if token == "methyl" and len(after) > 4 and after.endswith("ate"):
            return True
    return False


#: A cell that is a number (``12.5``, ``-3``, ``1,2e-3``, ``10.5 %``): never a species name.
_NUMBER_LIKE = re.compile(r"[+-]?(\d+([.,]\d*)?|[.,]\d+)(e[+-]?\d+)?\s*%?")


def is_species_like(text: str) -> bool:
    """Tell whether a column header looks like a species name, known or not.

    A lipid number (``C19:0``, ``C18:1_wt_pct``), a spelling of unidentified
    mass (``others``), a known species name, or a fatty-acid or methyl-ester word
    (``nonadecanoic``, ``vernolic acid``, ``methyl vernolate``) is species-like.
    Metadata and property headers (``supplier``, ``ffa_wt_pct``, ``cloud_point_C``,
    ``density_kg_m3``) are not.

    Parameters
    ----------
    text : str
        A column header.

    Returns
    -------
    bool
        True when the header should be read as a species column.

    Examples
    --------
    >>> is_species_like("C19:0"), is_species_like("methyl oleate")
    (True, True)
    >>> is_species_like("ffa_wt_pct"), is_species_like("cloud_point_C")
    (False, False)
    """
    if not isinstance(text, str) or _NUMBER_LIKE.fullmatch(text.strip().lower()):
        return False
    folded = _fold(text)
    if not folded:
        return False
    if _CORE.search(folded):
        return True
    if _PROPERTY_UNIT.search(" " + re.sub(r"[_/]+", " ", folded)):
        return False
    # _canonical, not canonical_species: the error message's close-match search
    # (difflib) is the slow part, and a header search asks this of every cell
    try:
        if _canonical(text, split=True) is not None:
            return True
    except UnknownSpeciesError:
        pass
    return _looks_fatty(re.findall(r"[a-z]+|\d+", folded))
