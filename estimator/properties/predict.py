"""Estimation core: compositions -> a long table of estimates, and its wide view.

:func:`estimate` evaluates the registered methods of every property for every
sample and returns the long table ``sample, property, method, value, unit,
error, in_domain, note``. :func:`wide` turns it into one row per sample with one
column per property (the default method, or the only method present), its
``<property>_error`` column and a ``flags`` column naming the estimates that lie
outside their method's fitted domain.

Errors: every ``error`` is one standard uncertainty (one standard deviation): the
method's band from evidence (:func:`estimator.properties.uncertainty.method_band`:
a verified published statistic, else the RMS of its residuals on the validation
tables, else a stated fallback), widened outside the fitted domain, combined in
quadrature with the GC repeatability of the composition. Other methods of a
property are evaluated only where the band needs them (no evidence, or outside
the fitted domain); the ideal-solubility cloud point is computed once. The
``note`` says which rule applies.
"""

from __future__ import annotations

from collections.abc import Mapping, Sequence
from dataclasses import dataclass

import numpy as np
import pandas as pd

from estimator.errors import ProfileError, UnknownNameError, UsageError
from estimator.properties.cold_flow import Imahara2006Steps
from estimator.properties.descriptors import DESCRIPTOR_UNITS, descriptors
from estimator.properties.methods import (
    CLOUD_POINT_KEY,
    CLOUD_POINT_METHODS,
    DEFAULTS,
    PROPERTIES,
    Method,
    get_method,
    methods_for,
)
from estimator.properties.uncertainty import (
    DEFAULT_GC,
    OUT_OF_DOMAIN_FACTOR,
    GCRepeatability,
    composition_sd,
    method_band,
    spread_of_methods,
)
from estimator.tables import species_keys

__all__ = [
    "CURVES", "DOMAIN_MARK", "LONG_COLUMNS", "curve_property", "estimate", "estimate_wide", "wide",
]

LONG_COLUMNS = ("sample", "property", "method", "value", "unit", "error", "in_domain", "note")
#: Marker in ``note`` before the list of violated domain bounds (parsed by :func:`wide`).
DOMAIN_MARK = "outside domain: "
#: Temperature-curve properties: base property -> name pattern ({} is the temperature tag).
CURVES = {
    "density_15C_kg_m3": "density_{}C_kg_m3",
    "kin_viscosity_40C_mm2_s": "kin_viscosity_{}C_mm2_s",
}
#: Tolerance on the row sums of ``wt_pct`` [wt %]; Profile renormalises before this.
SUM_TOLERANCE_WT_PCT = 0.5


def _temperature_tag(temperature_C: float) -> str:
    t = float(temperature_C)
    text = f"{abs(t):g}".replace(".", "p")
    return ("m" if t < 0 else "") + text


def curve_property(base: str, temperature_C: float) -> str:
    """Name of a temperature-curve property, e.g. ``density_m10C_kg_m3``.

    >>> curve_property("density_15C_kg_m3", -10)
    'density_m10C_kg_m3'
    >>> curve_property("kin_viscosity_40C_mm2_s", 12.5)
    'kin_viscosity_12p5C_mm2_s'
    """
    return CURVES[base].format(_temperature_tag(temperature_C))


def _validate(wt_pct, samples) -> tuple[np.ndarray, np.ndarray]:
    keys = species_keys()
    if isinstance(wt_pct, pd.DataFrame):
        missing = [k for k in keys if k not in wt_pct.columns]
        extra = [c for c in wt_pct.columns if c not in keys]
        if extra:
            raise ProfileError(f"unknown species columns: {', '.join(map(str, extra))}")
        wt_pct = wt_pct.reindex(columns=keys, fill_value=0.0) if missing else wt_pct[list(keys)]
    w = np.ascontiguousarray(wt_pct, dtype=float)  # row-wise steps read rows
    if w.ndim != 2 or w.shape[1] != len(keys):
        raise ProfileError(f"wt_pct must have shape (n_samples, {len(keys)}), got {w.shape}")
    ids = np.empty(len(samples), dtype=object)
    ids[:] = list(samples)
    if len(ids) != w.shape[0]:
        raise ProfileError(f"{len(ids)} sample ids for {w.shape[0]} compositions")
    if len(pd.unique(ids)) != len(ids):
        raise ProfileError("duplicate sample ids")
    bad = ~np.isfinite(w).all(axis=1) | (w < 0).any(axis=1)
    if bad.any():
        raise ProfileError(f"sample {ids[np.argmax(bad)]}: negative or non-finite mass %")
    sums = w.sum(axis=1)
    off = np.abs(sums - 100.0) > SUM_TOLERANCE_WT_PCT
    if off.any():
        i = int(np.argmax(off))
        raise ProfileError(
            f"sample {ids[i]}: mass % sum to {sums[i]:.3f}, not 100 +/- {SUM_TOLERANCE_WT_PCT}"
        )
    return w, ids


def _selection(methods) -> dict[str, list[str]]:
    if isinstance(methods, str):
        if methods == "default":
            return {p: [DEFAULTS[p]] for p in PROPERTIES}
        if methods == "all":
            return {p: list(methods_for(p)) for p in PROPERTIES}
        raise UsageError(f"methods must be 'default', 'all' or a mapping, got {methods!r}")
    chosen = {p: [DEFAULTS[p]] for p in PROPERTIES}
    for prop, name in dict(methods).items():
        if prop not in PROPERTIES:
            raise UnknownNameError(
                f"unknown property {prop!r}; valid properties: {', '.join(PROPERTIES)}"
            )
        get_method(prop, name)  # raises with the valid names
        chosen[prop] = [name]
    return chosen


def _spread(stack: np.ndarray) -> np.ndarray:
    """Population std over methods (axis 1) of the finite values; NaN below two."""
    ok = np.isfinite(stack)
    count = ok.sum(axis=1)
    safe = np.maximum(count, 1)
    mean = np.where(ok, stack, 0.0).sum(axis=1) / safe
    var = np.where(ok, (stack - mean[:, None]) ** 2, 0.0).sum(axis=1) / safe
    return np.where(count >= 2, np.sqrt(var), np.nan)


def _method_error(m: Method, base: str, values, inside, w, desc, t, spread_of):
    """The method's band per sample and its note text; alternatives only where needed.

    ``spread_of(rows)`` evaluates the property's other methods on the given rows only.
    """
    band = method_band(base, m.name)
    err = band.values(values)
    text = f"error: 1 SD; {band.text}"
    if band.needs_spread or band.with_fallback:
        fallback = np.full(len(values), np.nan)
        if len(methods_for(base)) >= 2:
            fallback = spread_of(np.arange(len(values)))
        if m.error_fallback is not None:
            # the method's own stated error counts too: two methods on one scale can
            # agree by construction, and their small spread is no evidence
            own = np.asarray(m.error_fallback(values, {base: fallback}), dtype=float)
            fallback = np.fmax(fallback, own)
        err = np.fmax(err, fallback)
    out = ~inside
    if out.any():
        rows = np.flatnonzero(out)
        widened = OUT_OF_DOMAIN_FACTOR * err[rows]
        if len(methods_for(base)) >= 2:
            widened = np.fmax(widened, spread_of(rows))
        err = err.copy()
        err[rows] = widened
        text += (f" (beyond the fitted domain: x{OUT_OF_DOMAIN_FACTOR:g}, at least the "
                 "methods' spread)")
    return err, text


class _Notes:
    """Builds a categorical ``note`` column block by block."""

    def __init__(self) -> None:
        self.index: dict[str, int] = {}
        self.codes: list[np.ndarray] = []

    def _code(self, text: str) -> int:
        return self.index.setdefault(text, len(self.index))

    def add(self, base: str, violations: list[tuple[str, np.ndarray]], n: int) -> None:
        active = [(r, m) for r, m in violations if m.any()]
        if not active:
            self.codes.append(np.full(n, self._code(base), dtype=np.int64))
            return
        bits = np.zeros(n, dtype=np.int64)
        for j, (_, mask) in enumerate(active):
            bits |= mask.astype(np.int64) << j
        uniq, inverse = np.unique(bits, return_inverse=True)
        texts = []
        for b in uniq:
            reasons = [r for j, (r, _) in enumerate(active) if (int(b) >> j) & 1]
            texts.append(f"{base}; {DOMAIN_MARK}{', '.join(reasons)}" if reasons else base)
        lookup = np.array([self._code(t) for t in texts], dtype=np.int64)
        self.codes.append(lookup[inverse.ravel()])

    def categorical(self) -> pd.Categorical:
        return pd.Categorical.from_codes(np.concatenate(self.codes), categories=list(self.index))


def estimate(
    wt_pct,
    samples: Sequence,
    *,
    methods: str | Mapping[str, str] = "default",
    temperatures_C: Sequence[float] = (),
    gc: GCRepeatability | None = DEFAULT_GC,
) -> pd.DataFrame:
    """Estimate every property of every sample; one row per sample, property and method.

    Parameters
    ----------
    wt_pct : ndarray or DataFrame
        FAME mass %, shape ``(n_samples, n_species)`` in species-table order
        (a DataFrame is reordered by its species columns), rows summing to
        100 within 0.5. [wt %]
    samples : sequence
        One unique id per row.
    methods : {'default', 'all'} or mapping, optional
        ``'default'``: the default method of every property; ``'all'``: every
        registered method; a mapping ``property -> method name`` overrides the
        defaults for the listed properties.
    temperatures_C : sequence of float, optional
        Extra temperatures for density and viscosity curves, reported as
        properties ``density_<T>C_kg_m3`` and ``kin_viscosity_<T>C_mm2_s``
        (``m10`` for -10, ``12p5`` for 12.5). [degC]
    gc : GCRepeatability or None, optional
        Repeatability of the GC area % propagated into ``error``; None leaves the
        composition's own uncertainty out.

    Returns
    -------
    DataFrame
        Columns exactly :data:`LONG_COLUMNS`; ``property``, ``method``,
        ``unit`` and ``note`` are categorical.

    Examples
    --------
    >>> w = np.zeros((1, len(species_keys()))); w[0, species_keys().index("C18:1")] = 100.0
    >>> long = estimate(w, ["oleate"], temperatures_C=[-10])
    >>> long.loc[long.property == "density_m10C_kg_m3", ["method", "value"]].round(1).values
    array([['ramirezverduzco2022', 893.3]], dtype=object)
    """
    w, ids = _validate(wt_pct, samples)
    ids, n, blocks = _blocks(w, ids, methods, temperatures_C, gc=gc)
    notes = _Notes()
    for b in blocks:
        notes.add(b.note, b.violations, n)

    def block_categorical(labels: list[str]) -> pd.Categorical:
        cats = list(dict.fromkeys(labels))
        codes = np.repeat(np.array([cats.index(x) for x in labels], dtype=np.int64), n)
        return pd.Categorical.from_codes(codes, categories=cats)

    return pd.DataFrame({
        "sample": np.tile(ids, len(blocks)),
        "property": block_categorical([b.name for b in blocks]),
        "method": block_categorical([b.method for b in blocks]),
        "value": np.concatenate([b.values for b in blocks]),
        "unit": block_categorical([b.unit for b in blocks]),
        "error": np.concatenate([b.error for b in blocks]),
        "in_domain": np.concatenate([b.inside for b in blocks]),
        "note": notes.categorical(),
    }, columns=list(LONG_COLUMNS))


class _LazyDescriptors(Mapping):
    """The descriptors of a composition, computed on first access (most methods need none)."""

    def __init__(self, w: np.ndarray) -> None:
        self._w = w
        self._d: dict[str, np.ndarray] | None = None
        self._cloud: np.ndarray | None = None

    def _all(self) -> dict[str, np.ndarray]:
        if self._d is None:
            self._d = descriptors(self._w)
        return self._d

    def __getitem__(self, key: str) -> np.ndarray:
        if key == CLOUD_POINT_KEY:  # computed once, shared by the methods built on it
            if self._cloud is None:
                self._cloud = methods_for("cloud_point_C")[DEFAULTS["cloud_point_C"]].evaluate(
                    self._w, {})
            return self._cloud
        if key not in DESCRIPTOR_UNITS:
            raise KeyError(key)  # e.g. a cache key some wrapper looks for: not computed here
        return self._all()[key]

    def __iter__(self):
        return iter(self._all())

    def __len__(self) -> int:
        return len(self._all())


class _RowsOf(Mapping):
    """Some rows of every descriptor, each taken on first access."""

    def __init__(self, desc: Mapping[str, np.ndarray], rows: np.ndarray) -> None:
        self._desc, self._rows, self._taken = desc, rows, {}

    def __getitem__(self, key: str) -> np.ndarray:
        if key not in self._taken:
            self._taken[key] = np.asarray(self._desc[key])[self._rows]
        return self._taken[key]

    def __iter__(self):
        return iter(self._desc)

    def __len__(self) -> int:
        return len(self._desc)


@dataclass(frozen=True)
class _Block:
    """One property estimated by one method for every sample."""

    name: str
    method: str
    unit: str
    values: np.ndarray
    error: np.ndarray
    inside: np.ndarray
    note: str
    violations: list


def _blocks(w, ids, methods, temperatures_C, desc=None, gc=DEFAULT_GC):
    """Evaluate every task (property or curve point) by the chosen methods."""
    n = w.shape[0]
    desc = descriptors(w) if desc is None else desc
    chosen = _selection(methods)
    temps = [float(t) for t in temperatures_C]
    if not all(np.isfinite(temps)):
        raise UsageError("temperatures_C must be finite numbers")
    tasks = [(p, p, None) for p in PROPERTIES]
    for t in temps:
        for base in CURVES:
            name = curve_property(base, t)
            if name not in PROPERTIES and name not in {x[0] for x in tasks}:
                tasks.append((name, base, t))

    # the ideal-solubility cloud point once: the cloud point itself, the CFPP-from-cloud-point
    # method and the curve points' check all read it through ``desc``
    cloud = methods_for("cloud_point_C")[DEFAULTS["cloud_point_C"]].evaluate(w, desc)
    desc = {**desc, CLOUD_POINT_KEY: cloud}
    # only the chosen methods are evaluated; the others only where a band needs them
    evaluated: dict[tuple[str, str], np.ndarray] = {}
    for name, base, t in tasks:
        for mname in chosen[base]:
            evaluated[name, mname] = methods_for(base)[mname].evaluate(w, desc, t)

    comp_sd: dict[tuple[str, str], np.ndarray] = {}
    if gc is not None and gc.active and n:
        keyed = {(name, m): (base, t) for (name, base, t) in tasks for m in chosen[base]}

        def evaluate_all(ww, names=None):
            dd = _LazyDescriptors(ww)
            with np.errstate(all="ignore"):
                return {key: methods_for(keyed[key][0])[key[1]].evaluate(ww, dd, keyed[key][1])
                        for key in (keyed if names is None else names)}

        cloud_steps = []  # built on first use

        def species_step(j, h, rows, names, stepped):
            # methods that see the composition only through the ideal-solubility cloud
            # point move with it: one cloud point per species step, for all of them
            via_cloud = [k for k in names if (keyed[k][0], k[1]) in CLOUD_POINT_METHODS]
            others = [k for k in names if k not in via_cloud]
            out = evaluate_all(stepped(), others) if others else {}
            if via_cloud:
                if not cloud_steps:
                    cloud_steps.append(Imahara2006Steps(w))
                sub = {CLOUD_POINT_KEY: cloud_steps[0].step(j, h)[rows]}
                # they read only the cloud point (and the number of rows) from here
                blind = np.broadcast_to(np.nan, (len(rows), w.shape[1]))
                with np.errstate(all="ignore"):
                    for key in via_cloud:
                        base_prop, t = keyed[key]
                        out[key] = methods_for(base_prop)[key[1]].evaluate(blind, sub, t)
            return out

        evaluate_all.species_step = species_step
        comp_sd = composition_sd(evaluate_all, w, gc, base={k: evaluated[k] for k in keyed})

    blocks = []
    for name, base, t in tasks:
        all_methods = methods_for(base)
        for mname in chosen[base]:
            m = all_methods[mname]
            values = evaluated[name, mname]
            violations = m.domain.violations(w, desc)
            if t is not None:
                # a curve point below the sample's estimated cloud point describes a liquid
                # that is already clouding: the per-ester liquid data do not hold there
                below = np.asarray(t < cloud)
                if below.any():
                    violations = [*violations, (f"{t:g} degC is below the estimated cloud "
                                                "point: wax is crystallising", below)]
            inside = np.ones(n, dtype=bool)
            for _, mask in violations:
                inside &= ~mask

            def spread_of(rows, base=base, t=t, mname=mname, values=values):
                if len(rows) == n:  # every row (rows is arange(n)): no copies
                    return spread_of_methods(base, w, desc, t, known={mname: values})
                return spread_of_methods(base, w[rows], _RowsOf(desc, rows), t,
                                         known={mname: values[rows]})

            err, err_text = _method_error(m, base, values, inside, w, desc, t, spread_of)
            if (name, mname) in comp_sd:
                err = np.sqrt(err**2 + comp_sd[name, mname] ** 2)
                err_text += "; with the GC repeatability of the composition"
            blocks.append(_Block(name, mname, m.unit, values, err, inside,
                                 f"{m.note}; {err_text}", violations))
    return ids, n, blocks


def estimate_wide(
    wt_pct,
    samples: Sequence,
    *,
    methods: str | Mapping[str, str] = "default",
    temperatures_C: Sequence[float] = (),
    desc: Mapping[str, np.ndarray] | None = None,
    gc: GCRepeatability | None = DEFAULT_GC,
) -> pd.DataFrame:
    """The wide table of :func:`wide` straight from the estimates, without the long table.

    Same columns and values as ``wide(estimate(...))`` for one method per property
    (the default path of ``predict``), several times faster on many samples. ``desc``
    may pass the descriptors of ``wt_pct`` when the caller has them already.

    Examples
    --------
    >>> w = np.zeros((1, len(species_keys()))); w[0, species_keys().index("C18:1")] = 100.0
    >>> fast = estimate_wide(w, ["oleate"])
    >>> slow = wide(estimate(w, ["oleate"]))
    >>> fast.equals(slow)
    True
    """
    if methods == "all":
        return wide(estimate(wt_pct, samples, methods=methods, temperatures_C=temperatures_C,
                             gc=gc))
    w, ids = _validate(wt_pct, samples)
    ids, n, blocks = _blocks(w, ids, methods, temperatures_C, desc, gc)
    out: dict[str, np.ndarray] = {"sample": np.asarray(ids, dtype=object)}
    code_columns, code_texts = [], []
    for b in blocks:
        out[b.name] = b.values
        out[f"{b.name}_error"] = b.error
        active = [(r, m) for r, m in b.violations if m.any()]
        if not active:
            continue
        bits = np.zeros(n, dtype=np.int64)
        for j, (_, mask) in enumerate(active):
            bits |= mask.astype(np.int64) << j
        uniq, inverse = np.unique(bits, return_inverse=True)
        texts = []
        for code in uniq:
            reasons = [r for j, (r, _) in enumerate(active) if (int(code) >> j) & 1]
            texts.append(f"{b.name}: outside {b.method} domain ({', '.join(reasons)})"
                         if reasons else "")
        code_columns.append(inverse.ravel())
        code_texts.append(texts)
    flags = np.full(n, "", dtype=object)
    if code_columns:
        # one text per distinct combination of flags, not one string join per sample
        # mixed-radix key per sample (each block has few distinct flag texts)
        if np.prod([float(len(t)) for t in code_texts]) > 2.0**62:
            raise UsageError("too many distinct out-of-domain combinations to label")
        key = np.zeros(n, dtype=np.int64)
        for codes, texts in zip(code_columns, code_texts, strict=True):
            key = key * len(texts) + codes
        combos, which = np.unique(key, return_inverse=True)
        text_of = []
        for combo in combos:
            parts, rest = [], int(combo)
            for texts in reversed(code_texts):
                rest, c = divmod(rest, len(texts))
                parts.append(texts[c])
            text_of.append("; ".join(t for t in reversed(parts) if t))
        flags = np.asarray(text_of, dtype=object)[which.ravel()]
    out["flags"] = flags
    return pd.DataFrame(out)


def _base_property(prop: str) -> str:
    if prop in PROPERTIES:
        return prop
    for base, pattern in CURVES.items():
        head, tail = pattern.split("{}")
        if prop.startswith(head) and prop.endswith(tail):
            return base
    return prop


def wide(long: pd.DataFrame) -> pd.DataFrame:
    """One row per sample: a value and an error column per property, and ``flags``.

    Per property the default method is used when the long table holds it,
    otherwise the first method present. ``flags`` lists the out-of-domain
    estimates as ``<property>: outside <method> domain (<reasons>)`` joined by
    ``"; "``, or is empty.

    Parameters
    ----------
    long : DataFrame
        A table from :func:`estimate`.

    Returns
    -------
    DataFrame
        Columns ``sample``, then ``<property>`` and ``<property>_error`` per
        property in the order of ``long``, then ``flags``.

    Examples
    --------
    >>> w = np.zeros((1, len(species_keys()))); w[0, species_keys().index("C18:1")] = 100.0
    >>> table = wide(estimate(w, ["oleate"]))
    >>> list(table.columns[:3]), table.loc[0, "flags"].split("; ")[0]
    (['sample', 'cetane_number', 'cetane_number_error'], 'oxidation_stability_110C_h: outside \
park2008_bape domain (bis-allylic position equivalents < 11 wt %)')
    """
    missing = [c for c in LONG_COLUMNS if c not in long.columns]
    if missing:
        raise UsageError(f"not a long estimate table; missing columns: {', '.join(missing)}")
    prop_codes, props = _codes(long["property"])
    method_codes, method_names = _codes(long["method"])
    # per property: the default method if present, else the first one present
    pair = prop_codes * len(method_names) + method_codes
    present = np.unique(pair)
    chosen = np.full(len(props), -1)
    for code in present:
        p, m = divmod(int(code), len(method_names))
        default = DEFAULTS.get(_base_property(props[p]))
        if chosen[p] < 0 or method_names[m] == default:
            chosen[p] = m
    used = np.flatnonzero(chosen >= 0)
    sel = method_codes == chosen[prop_codes]
    sample_codes, sample_order = pd.factorize(long["sample"])
    s_sel, p_sel = sample_codes[sel], prop_codes[sel]
    n = len(sample_order)
    value = np.full((n, len(props)), np.nan)
    error = np.full((n, len(props)), np.nan)
    value[s_sel, p_sel] = long["value"].to_numpy(dtype=float)[sel]
    error[s_sel, p_sel] = long["error"].to_numpy(dtype=float)[sel]
    out = {"sample": np.asarray(sample_order, dtype=object)}
    for j in used:
        out[props[j]] = value[:, j]
        out[f"{props[j]}_error"] = error[:, j]

    flags = np.full(n, "", dtype=object)
    bad = sel & ~long["in_domain"].to_numpy(dtype=bool)
    if bad.any():
        note_codes, notes = _codes(long["note"])
        p_all = prop_codes[bad]
        combo = p_all * len(notes) + note_codes[bad]
        uniq, inverse = np.unique(combo, return_inverse=True)
        texts = []
        for code in uniq:
            p, k = divmod(int(code), len(notes))
            reasons = str(notes[k]).split(DOMAIN_MARK, 1)[-1]
            texts.append(f"{props[p]}: outside {method_names[chosen[p]]} domain ({reasons})")
        text_of_row = np.asarray(texts, dtype=object)[inverse.ravel()]
        per_prop = np.full((n, len(props)), "", dtype=object)
        per_prop[sample_codes[bad], p_all] = text_of_row
        for j in np.unique(p_all):
            col = per_prop[:, j]
            has = col != ""
            sep = np.where((flags != "") & has, "; ", "")
            flags = flags + sep + col
    out["flags"] = flags
    return pd.DataFrame(out)


def _codes(column: pd.Series) -> tuple[np.ndarray, list]:
    """Integer codes and their labels, in order of first appearance."""
    codes, uniques = pd.factorize(column, sort=False)
    return codes, [str(u) for u in uniques]
