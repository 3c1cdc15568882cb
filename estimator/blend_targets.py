"""Blend targets and the highest blend level that meets them.

A target is a limit a blend must meet: a cold-flow maximum the blender chooses
(``--max-cfpp``, ``--max-cloud-point``), the CFPP (and arctic cloud point) of an
EN 590 climate class, or the property limits of a blend specification (EN 590 up
to B7, ASTM D7467 for B6-B20). :func:`highest_levels` finds, for each FAME, the
highest level meeting each target by a vectorised bisection (NumPy, every FAME at
once) on the continuous blend curve of :mod:`estimator.blending`, and also with
the stated error taken against the blend. Every "none" or B0 says why: the
limiting target and whether the diesel alone already misses it.
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass

import numpy as np
import pandas as pd

from estimator.blending import (
    BLEND_METHODS,
    BLEND_PROPERTIES,
    Diesel,
    FameComponent,
    FameConformity,
    blend_arrays,
)
from estimator.errors import UnknownNameError, UsageError
from estimator.specs import SPEC_NAMES

__all__ = [
    "BLEND_SPECS",
    "BLEND_SPEC_FAME_CONTENT",
    "BLEND_SPEC_FAME_STANDARD",
    "Target",
    "blend_targets",
    "highest_levels",
    "summary_table",
]


@dataclass(frozen=True)
class Target:
    """A limit a blend must meet: ``value <= limit`` (``kind='max'``) or ``>=`` (``'min'``).

    ``group`` ties the property limits of one specification together with the
    FAME content that specification allows (``max_level_pct_v``,
    ``min_level_pct_v``).
    """

    property: str
    kind: str
    limit: float
    label: str
    group: str = "target"
    max_level_pct_v: float = 100.0
    min_level_pct_v: float = 0.0
    source: str = ""


#: Grid on which the first crossing of a target is bracketed before bisection [% v/v].
ROOT_GRID_PCT_V = np.linspace(0.0, 100.0, 101)
#: Bisection steps inside a 1 % v/v bracket: 2**-20 % v/v, far below any reported digit.
BISECTION_STEPS = 20


def _margins(fame: FameComponent, diesel: Diesel, t: Target, levels: np.ndarray,
             with_error) -> np.ndarray:
    """``sign * (value - limit)`` (> 0 misses) on levels (L,) or one row per sample (n, L);
    ``with_error`` (bool, or one per sample) takes the stated error against the blend."""
    v, e = blend_arrays(fame, diesel, levels, only=t.property)[t.property,
                                                                 BLEND_METHODS[t.property][0]]
    sign = 1.0 if t.kind == "max" else -1.0
    use = np.asarray(with_error, dtype=bool)
    use = use[:, None] if use.ndim == 1 else use
    return sign * (v + np.where(use, sign * e, 0.0) - t.limit)


def _bisect(fame: FameComponent, diesel: Diesel, t: Target, lo: np.ndarray, hi: np.ndarray,
            with_error: np.ndarray) -> np.ndarray:
    """Highest level meeting ``t`` inside [lo, hi] per entry (met at lo, missed at hi):
    bisection on every entry at once, in NumPy (no per-sample root finder)."""
    lo, hi = lo.astype(float).copy(), hi.astype(float).copy()
    for _ in range(BISECTION_STEPS):
        mid = 0.5 * (lo + hi)
        miss = _margins(fame, diesel, t, mid[:, None], with_error)[:, 0]
        missed = ~(miss <= 0)  # NaN counts as missed
        hi = np.where(missed, mid, hi)
        lo = np.where(missed, lo, mid)
    return lo


def highest_levels(fame: FameComponent, diesel: Diesel, targets: Sequence[Target]) -> pd.DataFrame:
    """Highest blend level meeting each target and each specification group, per sample.

    The level is the largest B such that the blend meets the target at every level
    from B0 up to B: the margin is evaluated on a 1 % v/v grid for every sample at
    once, and the first sign change is refined by bisection on the continuous blend
    curve (default rule), all samples together. ``highest_level_with_error_pct_v``
    does the same with the stated error taken against the blend. A specification
    group's level is the lowest of its targets, capped at the FAME content that
    specification allows; NaN when no level meets it. A blend specification admits
    only FAME that meets its FAME standard (:data:`BLEND_SPEC_FAME_STANDARD`: EN 590
    -> EN 14214, ASTM D7467 -> ASTM D6751): a FAME that fails a limit of it no
    treatment fixes, or cannot be judged on one (not estimated, outside the method's
    range, or not checked), gets no level for that specification. A level given on a
    condition says so in ``reason``: a failure an antioxidant dose fixes, a limit too
    close to call (the cautious level is then NaN), a B100 CFPP failure not counted
    because the blend's own CFPP is checked.

    Every row says why in ``reason`` when its level is none or B0: the limiting
    target, and whether the diesel alone already misses it (``diesel_misses``).
    """
    grid = ROOT_GRID_PCT_V
    results: dict[tuple[int, bool], np.ndarray] = {}
    hows: dict[int, np.ndarray] = {}
    curves: dict[str, tuple[np.ndarray, np.ndarray]] = {}
    done: dict[tuple[str, str, float], int] = {}  # a limit two groups share is solved once
    for k, t in enumerate(targets):
        same = done.setdefault((t.property, t.kind, t.limit), k)
        if same != k:
            results[k, False], results[k, True] = results[same, False], results[same, True]
            hows[k] = hows[same]
            continue
        if t.property not in curves:
            curves[t.property] = blend_arrays(fame, diesel, grid, only=t.property)[
                t.property, BLEND_METHODS[t.property][0]]
        v, e = curves[t.property]
        sign = 1.0 if t.kind == "max" else -1.0
        pending = []  # (sample rows, with_error, bracket index) to refine by bisection
        for with_error in (False, True):
            margin = sign * (v + (sign * e if with_error else 0.0) - t.limit)
            nan = np.isnan(margin)
            stop = (margin > 0) | nan
            first = np.where(stop.any(axis=1), stop.argmax(axis=1), -1)
            rows = np.arange(len(first))
            at = np.clip(first, 0, None)
            stop_nan = nan[rows, at] & (first >= 0)
            level = np.where(first < 0, grid[-1], np.nan)
            how = np.where(first < 0, "met at every level", "root of the blend curve")
            how = np.where((first == 0) & ~stop_nan, "the diesel alone misses it", how)
            how = np.where((first == 0) & stop_nan,
                           "not computable (a component value is missing)", how)
            partial = (first > 0) & stop_nan
            level = np.where(partial, grid[np.clip(first - 1, 0, None)], level)
            how = np.where(partial, "met up to the last level computable (a component value "
                           "is missing beyond)", how)
            root = np.flatnonzero((first > 0) & ~stop_nan)
            pending.append((root, np.full(len(root), with_error), first[root]))
            results[k, with_error] = level
            if not with_error:
                hows[k] = how
        idx = np.concatenate([p[0] for p in pending])
        if len(idx):
            case = np.concatenate([p[1] for p in pending])
            j = np.concatenate([p[2] for p in pending])
            found = _bisect(_take(fame, idx), diesel, t, grid[j - 1], grid[j], case)
            for with_error, (root, _, _) in zip((False, True), pending):
                part = found[:len(root)]
                found = found[len(root):]
                results[k, with_error][root] = part
    # per target once: the diesel's value, and the columns as Python floats and strings
    per_target = []
    for k, t in enumerate(targets):
        d_value = diesel.value(t.property)
        d_misses = bool(np.isfinite(d_value) and (
            d_value > t.limit if t.kind == "max" else d_value < t.limit))
        per_target.append((t, d_value, d_misses, results[k, False].tolist(),
                           results[k, True].tolist(), hows[k].tolist()))
    rows_out = []
    for i, sample in enumerate(fame.samples):
        groups: dict[str, list] = {}
        for t, d_value, d_misses, levels, levels_e, how in per_target:
            level = float(levels[i])
            row = {
                "sample": sample, "group": t.group, "target": t.label, "property": t.property,
                "kind": t.kind, "limit": t.limit,
                "highest_level_pct_v": level,
                "highest_level_with_error_pct_v": float(levels_e[i]),
                "how": str(how[i]), "diesel_value": d_value, "diesel_misses": d_misses,
                "reason": _reason(t, level, d_misses, d_value, str(how[i])),
                "source": t.source,
            }
            rows_out.append(row)
            groups.setdefault(t.group, []).append((t, row))
        for group, members in groups.items():
            if group != "target":
                rows_out.append(_group_row(sample, group, members, _standing(fame, group, i)))
    return pd.DataFrame(rows_out)


def _reason(t: Target, level: float, diesel_misses: bool, diesel_value: float, how: str) -> str:
    """Why a target gives no level or B0 ('' otherwise)."""
    if math.isfinite(level) and level >= 0.05:
        return ""
    if diesel_misses:
        return f"diesel alone misses {t.label} ({diesel_value:g})"
    if how.startswith("not computable"):
        return f"{t.label} not computable (a component value is missing)"
    return f"{t.label} missed from the first FAME added"


def _standing(fame: FameComponent, group: str, i: int) -> FameConformity | None:
    """Sample ``i``'s standing against the FAME standard of blend spec ``group`` (None:
    the specification names no FAME standard; an empty standard key: not checked)."""
    standard = BLEND_SPEC_FAME_STANDARD.get(group, ("", ""))[0]
    if not standard:
        return None
    checked = fame.conformity.get(standard, ())
    return checked[i] if i < len(checked) else FameConformity("")


#: Properties a treatment fixes in the neat FAME (words of the condition).
_FIXES = {"oxidation_stability_110C_h": "an antioxidant dose"}
#: B100 limits not counted for a blend: the blend's own limit of that property replaces
#: them (EN 590 sets the blend's CFPP per climate class).
_NOT_COUNTED = ("cfpp_C",)
_UNJUDGED = ("outside method range", "not estimated")


def _fame_words(status: FameConformity, name: str) -> tuple[bool, bool, list[str]]:
    """Whether the FAME standard withholds the level, whether the cautious level goes,
    and the words beside the level."""
    from estimator.specs import PROPERTY_LABELS

    std = _SPEC_NAMES.get(status.standard, status.standard)

    def labels(props):
        return ", ".join(PROPERTY_LABELS.get(p, p) for p in props)

    if not status.standard:
        return True, True, [f"FAME not checked against the FAME standard {name} requires"]
    counted = [(p, v) for p, v in status.limits if p not in _NOT_COUNTED]
    blocking = [p for p, v in counted if p not in _FIXES and v in ("fails", *_UNJUDGED)]
    not_counted = []
    for p, v in status.limits:
        if p in _NOT_COUNTED:
            verdict = {"fails": "fails", "too close to call": "too close to call on"}.get(
                v, "not judged on")
            not_counted.append(f"B100 {PROPERTY_LABELS.get(p, p)} {verdict} {std} (not "
                               f"counted: the blend's {PROPERTY_LABELS.get(p, p)} is checked "
                               "instead)")
    if blocking:
        fails = [p for p, v in counted if v == "fails"]
        outside = [p for p, v in counted if v == _UNJUDGED[0]]
        missing = [p for p, v in counted if v == _UNJUDGED[1]]
        words = []
        if fails:
            words.append(f"FAME fails {std} ({labels(fails)})")
        if outside or missing:
            why = [f"{labels(props)}: {what}" for props, what in (
                (outside, "outside the fitted range of the method"),
                (missing, "not estimated")) if props]
            words.append(f"FAME not judged on {std} ({'; '.join(why)})")
        return True, True, words + not_counted
    words = []
    for p, v in counted:
        if p in _FIXES and v == "fails":
            words.append(f"only with {_FIXES[p]} ({PROPERTY_LABELS.get(p, p)} fails {std})")
        elif p in _FIXES and v in _UNJUDGED:
            words.append(f"only after a laboratory test or {_FIXES[p]} "
                         f"({PROPERTY_LABELS.get(p, p)} not judged on {std})")
    close = [p for p, v in counted if v == "too close to call"]
    if close:
        words.append(f"{labels(close)} too close to call on {std}")
    return False, bool(close), words + not_counted


def _group_row(sample: str, group: str, members: list,
               status: FameConformity | None = None) -> dict:
    t0 = members[0][0]
    cap, floor = t0.max_level_pct_v, t0.min_level_pct_v

    def lowest(key):
        vals = [r[key] for _, r in members]
        return np.nan if any(math.isnan(v) for v in vals) else min(vals)

    def capped(v):
        if math.isnan(v):
            return np.nan
        v = min(v, cap)
        return v if v >= floor else np.nan

    raw = lowest("highest_level_pct_v")
    lvl, lvl_e = capped(raw), capped(lowest("highest_level_with_error_pct_v"))
    limiting_rows = [r for _, r in members
                     if math.isnan(r["highest_level_pct_v"]) or r["highest_level_pct_v"] == raw]
    limiting = [r["target"] for r in limiting_rows]
    diesel_misses = any(r["diesel_misses"] for r in limiting_rows)
    name = _SPEC_NAMES.get(group, group)
    withheld, no_cautious, fame_words = (False, False, []) if status is None else \
        _fame_words(status, name)
    if withheld:
        lvl = lvl_e = np.nan
        std = _SPEC_NAMES.get(status.standard, status.standard) or "its FAME standard"
        reason = "; ".join(fame_words)
        how = f"{reason}; {name} admits only FAME meeting {std}"
    elif math.isnan(lvl):
        how = f"no level from B{floor:g} to B{cap:g} meets {', '.join(limiting)}"
        reason = "; ".join(r["reason"] for r in limiting_rows if r["reason"]) or (
            f"{', '.join(limiting)} met only below B{floor:g}, the least {name} covers")
    elif lvl == cap:
        how = f"capped at the B{cap:g} the specification allows"
        reason = ""
    else:
        how = f"limited by {', '.join(limiting)}"
        reason = ("; ".join(r["reason"] for r in limiting_rows if r["reason"])
                  if lvl < 0.05 else "")
    if not withheld and fame_words:
        if no_cautious:
            lvl_e = np.nan
        reason = "; ".join([*([reason] if reason else []), *fame_words])
        how = f"{how}; {'; '.join(fame_words)}"
    return {
        "sample": sample, "group": group, "target": f"{name} (all its limits)",
        "property": "all", "kind": "", "limit": np.nan,
        "highest_level_pct_v": lvl, "highest_level_with_error_pct_v": lvl_e, "how": how,
        "diesel_value": np.nan, "diesel_misses": diesel_misses, "reason": reason,
        "source": t0.source + (f"; FAME: {BLEND_SPEC_FAME_STANDARD[group][1]}"
                               if group in BLEND_SPEC_FAME_STANDARD else ""),
    }


def _take(fame: FameComponent, rows) -> FameComponent:
    sl = np.atleast_1d(np.asarray(rows, dtype=int))
    return FameComponent(
        samples=[fame.samples[i] for i in sl],
        values={k: v[sl] for k, v in fame.values.items()},
        errors={k: v[sl] for k, v in fame.errors.items()},
        methods={k: v[sl] for k, v in fame.methods.items()},
        in_domain={k: v[sl] for k, v in fame.in_domain.items()},
        mean_molar_mass_g_mol=fame.mean_molar_mass_g_mol[sl],
        saturated_mole_fraction=fame.saturated_mole_fraction[sl],
        melting_point_C=fame.melting_point_C,
        enthalpy_fusion_kJ_mol=fame.enthalpy_fusion_kJ_mol,
        conformity={k: tuple(v[i] for i in sl) for k, v in fame.conformity.items()},
    )


#: FAME content each blend specification allows [% v/v]: (min, max, source).
BLEND_SPEC_FAME_CONTENT = {
    "en590": (0.0, 7.0, "EN 590:2022: up to 7.0 % (V/V) FAME (standards.md 3.3, VERIFIED [S20])"),
    "astm-d7467": (6.0, 20.0, "ASTM D7467: B6 to B20 (standards.md 3.2, VERIFIED [S12])"),
}
#: The FAME standard each blend specification requires of its FAME, and the source.
BLEND_SPEC_FAME_STANDARD = {
    "en590": ("en14214", "EN 590:2022 scope: diesel with up to 7.0 % (V/V) FAME meeting "
                         "EN 14214 (standards.md 3.3, VERIFIED [S20])"),
    "astm-d7467": ("astm-d6751", "B100 used in D7467 blends must meet ASTM D6751 before "
                                 "blending (standards.md 2, VERIFIED [S8][S14])"),
}
#: Blend specifications checked by default.
BLEND_SPECS = tuple(BLEND_SPEC_FAME_CONTENT)
_COLD = ("cfpp_C", "cloud_point_C")


def _label(prop: str, kind: str, limit: float, unit: str) -> str:
    from estimator.specs import PROPERTY_LABELS

    unit = "" if unit in ("1", "") else f" {unit}"
    return f"{PROPERTY_LABELS.get(prop, prop)} {'<=' if kind == 'max' else '>='} {limit:g}{unit}"


def blend_targets(
    *,
    max_cfpp_C: float | None = None,
    max_cloud_point_C: float | None = None,
    climate_class: str | None = None,
    specs: Sequence[str] = BLEND_SPECS,
) -> list[Target]:
    """The targets of a blend job: the user's cold-flow limits, a climate class, blend specs.

    A climate class (EN 590 A-F, arctic 0-4; limits from ``specs.csv``) adds its CFPP
    (and, for arctic classes, cloud point) as targets and also applies to the EN 590
    group. Each specification in ``specs`` becomes a group of property targets with
    the FAME content it allows (:data:`BLEND_SPEC_FAME_CONTENT`).

    Raises
    ------
    UsageError
        ``--max-cfpp`` or ``--max-cloud-point`` given together with a climate class
        that sets a different limit for the same property (contradictory targets).
    UnknownNameError
        An unknown blend specification or climate class.

    Examples
    --------
    >>> [t.label for t in blend_targets(climate_class="F", specs=())]
    ['CFPP <= -20 °C']
    """
    from estimator.specs import limits

    targets: list[Target] = []
    user = {"cfpp_C": max_cfpp_C, "cloud_point_C": max_cloud_point_C}
    option = {"cfpp_C": "--max-cfpp", "cloud_point_C": "--max-cloud-point"}
    for prop, value in user.items():
        if value is not None:
            if not np.isfinite(value):
                raise UsageError(f"{option[prop]}: not a finite temperature: {value}")
            targets.append(Target(prop, "max", float(value),
                                  _label(prop, "max", float(value), "°C"), source="user"))
    if climate_class is not None:
        table = limits("en590", climate_class)
        table = table[table["climate_class"].notna() & table["property"].isin(_COLD)]
        for row in table.itertuples(index=False):
            given = user[row.property]
            if given is not None and float(given) != float(row.limit):
                raise UsageError(
                    f"{option[row.property]} {given:g} contradicts --climate-class "
                    f"{climate_class} (EN 590 {row.property} max {row.limit:g} °C); give one"
                )
            if given is None:
                targets.append(Target(
                    row.property, "max", float(row.limit),
                    _label(row.property, "max", float(row.limit), "°C"),
                    source=f"EN 590 class {row.climate_class}: {row.source}",
                ))
    for spec in specs:
        key = str(spec).strip().lower()
        if key not in BLEND_SPEC_FAME_CONTENT:
            raise UnknownNameError(
                f"unknown blend specification {spec!r}; blend specifications: "
                f"{', '.join(BLEND_SPEC_FAME_CONTENT)}"
            )
        lo, hi, content_source = BLEND_SPEC_FAME_CONTENT[key]
        table = limits(key, climate_class if key == "en590" else None)
        for row in table[table["property"].isin(list(BLEND_PROPERTIES))].itertuples(index=False):
            targets.append(Target(
                row.property, row.bound, float(row.limit),
                _label(row.property, row.bound, float(row.limit), row.unit), group=key,
                max_level_pct_v=hi, min_level_pct_v=lo,
                source=f"{row.edition}; {row.source}; FAME content: {content_source}",
            ))
    return targets


def summary_table(levels: pd.DataFrame) -> pd.DataFrame:
    """Samples x targets: the highest level meeting each, as ``B<level> (B<with error>)``.

    The bracket is the highest level with the stated error taken against the blend
    (the cautious answer); one column per user target and per specification (all of
    its limits together, capped at the blend range the specification covers). A
    cell that is "none" or B0 names the limiting target and whether the diesel
    alone misses it; a specification cell of a FAME failing (or not judged on) the
    FAME standard it requires says so instead, and a level given on a condition
    carries the condition in words.
    """
    shown = levels[(levels["group"] == "target") | (levels["property"] == "all")]
    cells: dict[str, dict[str, str]] = {}
    order: list[str] = []
    for row in shown.itertuples(index=False):
        what = row.target if row.group == "target" else _SPEC_NAMES.get(row.group, row.group)
        if what not in order:
            order.append(what)
        level, cautious = row.highest_level_pct_v, row.highest_level_with_error_pct_v
        reason = str(getattr(row, "reason", "") or "")
        if row.group != "target" and reason.startswith("FAME ") and np.isnan(level):
            text = reason
        elif np.isnan(level):
            text = "none" + (f": {reason}" if reason else "")
        else:
            text = f"B{level:.1f}"
            if np.isnan(cautious):
                text += " (none)"
            elif abs(cautious - level) > 0.05:
                text += f" (B{cautious:.1f})"
            if reason:
                text += f": {reason}"
        cells.setdefault(str(row.sample), {})[what] = text
    table = pd.DataFrame.from_dict(cells, orient="index").reindex(columns=order)
    table.insert(0, "sample", table.index)
    return table.reset_index(drop=True).fillna("-")


_SPEC_NAMES = SPEC_NAMES
