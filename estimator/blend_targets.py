"""Blend targets and the highest blend level that meets them.

A target is a limit a blend must meet: a cold-flow maximum the blender chooses
(``--max-cfpp``, ``--max-cloud-point``), the CFPP (and arctic cloud point) of an
EN 590 climate class, or the property limits of a blend specification (EN 590 up
to B7, ASTM D7467 for B6-B20). :func:`highest_levels` finds, for each FAME, the
highest level meeting each target by root finding (``scipy.optimize.brentq``) on
the continuous blend curve of :mod:`estimator.blending`, and also with the
stated error taken against the blend.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass

import numpy as np
import pandas as pd

from estimator.blending import (
    BLEND_METHODS,
    BLEND_PROPERTIES,
    Diesel,
    FameComponent,
    blend_arrays,
)
from estimator.errors import UnknownNameError, UsageError

__all__ = [
    "BLEND_SPECS",
    "BLEND_SPEC_FAME_CONTENT",
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


def _margin(fame_i: FameComponent, diesel: Diesel, target: Target, with_error: bool):
    prop = target.property
    key = (prop, BLEND_METHODS[prop][0])
    sign = 1.0 if target.kind == "max" else -1.0

    def g(level: float) -> float:
        v, e = blend_arrays(fame_i, diesel, [level], only=prop)[key]
        value = float(v[0, 0]) + (sign * float(e[0, 0]) if with_error else 0.0)
        return sign * (value - target.limit)

    return g


#: Grid on which the first crossing of a target is bracketed before brentq [% v/v].
ROOT_GRID_PCT_V = np.linspace(0.0, 100.0, 101)


def _crossings(values: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Per row: index of the first grid point with margin > 0 (-1 if none), and NaN rows."""
    bad = values > 0
    first = np.where(bad.any(axis=1), bad.argmax(axis=1), -1)
    return first, np.isnan(values).any(axis=1)


def highest_levels(fame: FameComponent, diesel: Diesel, targets: Sequence[Target]) -> pd.DataFrame:
    """Highest blend level meeting each target and each specification group, per sample.

    The level is the largest B such that the blend meets the target at every level
    from B0 up to B: the margin is evaluated on a 1 % v/v grid for every sample at
    once, and the first sign change is refined by :func:`scipy.optimize.brentq` on
    the continuous blend curve (default rule). ``highest_level_with_error_pct_v``
    does the same with the stated error taken against the blend. A specification
    group's level is the lowest of its targets, capped at the FAME content that
    specification allows; NaN when no level meets it.
    """
    from scipy.optimize import brentq

    grid = ROOT_GRID_PCT_V
    props = list(dict.fromkeys(t.property for t in targets))
    curves = {}
    for prop in props:
        curves.update(blend_arrays(fame, diesel, grid, only=prop))
    results: dict[tuple[int, bool], np.ndarray] = {}
    hows: dict[int, np.ndarray] = {}
    for k, t in enumerate(targets):
        v, e = curves[t.property, BLEND_METHODS[t.property][0]]
        sign = 1.0 if t.kind == "max" else -1.0
        for with_error in (False, True):
            margin = sign * (v + (sign * e if with_error else 0.0) - t.limit)
            first, nan = _crossings(margin)
            level = np.where(first < 0, grid[-1], np.nan)
            how = np.where(first < 0, "met at every level", "root of the blend curve")
            how = np.where(first == 0, "the diesel alone misses it", how)
            for i in np.flatnonzero(first > 0):
                g = _margin(_take(fame, int(i)), diesel, t, with_error)
                j = int(first[i])
                level[i] = brentq(g, grid[j - 1], grid[j], xtol=1e-6)
            level[nan] = np.nan
            how = np.where(nan, "not computable (a component value is missing)", how)
            results[k, with_error] = level
            if not with_error:
                hows[k] = how
    rows = []
    for i, sample in enumerate(fame.samples):
        groups: dict[str, list] = {}
        for k, t in enumerate(targets):
            row = {
                "sample": sample, "group": t.group, "target": t.label, "property": t.property,
                "kind": t.kind, "limit": t.limit,
                "highest_level_pct_v": float(results[k, False][i]),
                "highest_level_with_error_pct_v": float(results[k, True][i]),
                "how": str(hows[k][i]), "source": t.source,
            }
            rows.append(row)
            groups.setdefault(t.group, []).append((t, row))
        for group, members in groups.items():
            if group != "target":
                rows.append(_group_row(sample, group, members))
    return pd.DataFrame(rows)


def _group_row(sample: str, group: str, members: list) -> dict:
    t0 = members[0][0]
    cap, floor = t0.max_level_pct_v, t0.min_level_pct_v

    def lowest(key):
        vals = [r[key] for _, r in members]
        return np.nan if any(np.isnan(v) for v in vals) else min(vals)

    def capped(v):
        if np.isnan(v):
            return np.nan
        v = min(v, cap)
        return v if v >= floor else np.nan

    raw = lowest("highest_level_pct_v")
    lvl, lvl_e = capped(raw), capped(lowest("highest_level_with_error_pct_v"))
    limiting = [r["target"] for _, r in members
                if np.isnan(r["highest_level_pct_v"]) or r["highest_level_pct_v"] == raw]
    if np.isnan(lvl):
        how = f"no level from B{floor:g} to B{cap:g} meets {', '.join(limiting)}"
    elif lvl == cap:
        how = f"capped at the B{cap:g} the specification allows"
    else:
        how = f"limited by {', '.join(limiting)}"
    return {
        "sample": sample, "group": group, "target": f"{_SPEC_NAMES.get(group, group)} "
        "(all its limits)", "property": "all", "kind": "", "limit": np.nan,
        "highest_level_pct_v": lvl, "highest_level_with_error_pct_v": lvl_e, "how": how,
        "source": t0.source,
    }


def _take(fame: FameComponent, i: int) -> FameComponent:
    sl = slice(i, i + 1)
    return FameComponent(
        samples=fame.samples[sl], values={k: v[sl] for k, v in fame.values.items()},
        errors={k: v[sl] for k, v in fame.errors.items()},
        methods={k: v[sl] for k, v in fame.methods.items()},
        in_domain={k: v[sl] for k, v in fame.in_domain.items()},
        mean_molar_mass_g_mol=fame.mean_molar_mass_g_mol[sl],
        saturated_mole_fraction=fame.saturated_mole_fraction[sl],
        melting_point_C=fame.melting_point_C,
        enthalpy_fusion_kJ_mol=fame.enthalpy_fusion_kJ_mol,
    )


#: FAME content each blend specification allows [% v/v]: (min, max, source).
BLEND_SPEC_FAME_CONTENT = {
    "en590": (0.0, 7.0, "EN 590:2022: up to 7.0 % (V/V) FAME (standards.md 3.3, VERIFIED [S20])"),
    "astm-d7467": (6.0, 20.0, "ASTM D7467: B6 to B20 (standards.md 3.2, VERIFIED [S12])"),
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
    its limits together, capped at the blend range the specification covers).
    """
    shown = levels[(levels["group"] == "target") | (levels["property"] == "all")]
    cells: dict[str, dict[str, str]] = {}
    order: list[str] = []
    for row in shown.itertuples(index=False):
        what = row.target if row.group == "target" else _SPEC_NAMES.get(row.group, row.group)
        if what not in order:
            order.append(what)
        level, cautious = row.highest_level_pct_v, row.highest_level_with_error_pct_v
        if np.isnan(level):
            text = "none"
        else:
            text = f"B{level:.1f}"
            if np.isnan(cautious):
                text += " (none)"
            elif abs(cautious - level) > 0.05:
                text += f" (B{cautious:.1f})"
        cells.setdefault(str(row.sample), {})[what] = text
    table = pd.DataFrame.from_dict(cells, orient="index").reindex(columns=order)
    table.insert(0, "sample", table.index)
    return table.reset_index(drop=True).fillna("-")


_SPEC_NAMES = {"en590": "EN 590", "astm-d7467": "ASTM D7467"}
