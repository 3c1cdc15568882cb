"""Warn when a sample said to be a given oil lies outside that oil's Codex ranges.

The ranges (``estimator/tables/feedstock_ranges.csv``) are Codex CXS 210-1999
composition limits (mass % of total fatty acids) and oil-basis iodine values. A
sample whose ``feedstock`` metadata names a listed oil is compared on the
fatty-acid basis; each species or iodine value outside its range becomes one
warning. A warning is not an error: a lot may be mislabelled, blended, or simply
unusual, and the buyer should know before relying on the label.
"""

from __future__ import annotations

import pandas as pd

from estimator.profiles.profile import Profile, _oil_key
from estimator.properties.descriptors import convert_basis, iodine_value
from estimator.tables import load_table, species_keys

__all__ = ["codex_warnings", "feedstock_key"]

#: Spellings of feedstock labels that name a library oil differently (common practice).
ALIASES = {
    "canola": "rapeseed", "rapeseedoil": "rapeseed", "lowerucicrapeseed": "rapeseed",
    "soya": "soybean", "soyabean": "soybean", "soy": "soybean", "flax": "linseed",
    "flaxseed": "linseed", "higholeicsunflower": "sunflower-high-oleic",
    "sunflowerhigholeic": "sunflower-high-oleic", "higholeicsafflower": "safflower-high-oleic",
    "maize": "corn", "groundnut": "peanut", "arachis": "peanut",
}


def feedstock_key(label: object) -> str | None:
    """The library oil a feedstock label names (e.g. 'Soya bean oil' -> 'soybean'), or None."""
    if not isinstance(label, str) or not label.strip():
        return None
    key = _oil_key(label)
    for suffix in ("oil", "seed"):
        if key.endswith(suffix) and key != suffix:
            key = key[: -len(suffix)] if key[: -len(suffix)] else key
    names = {_oil_key(n): n for n in load_table("feedstock_ranges")["oil"].unique()}
    if key in names:
        return names[key]
    alias = ALIASES.get(key) or ALIASES.get(_oil_key(label))
    return alias if alias in names.values() else None


def codex_warnings(profile: Profile, column: str = "feedstock") -> pd.Series:
    """One string per sample listing where it lies outside its feedstock's Codex ranges.

    Samples without a recognised ``feedstock`` label get an empty string.
    """
    out = pd.Series("", index=profile.composition.index, dtype=object)
    if column not in profile.metadata.columns:
        return out
    ranges = load_table("feedstock_ranges")
    fa = convert_basis(profile.wt_pct, "fame", "fatty-acid")
    iv_oil = iodine_value(convert_basis(profile.wt_pct, "fame", "oil"), "oil")
    keys = species_keys()
    for i, label in enumerate(profile.metadata[column]):
        oil = feedstock_key(label)
        if oil is None:
            continue
        msgs = []
        for _, row in ranges[ranges["oil"] == oil].iterrows():
            q = row["quantity"]
            value = iv_oil[i] if q == "iodine_value_oil" else fa[i, keys.index(q)]
            lo, hi = float(row["min"]), float(row["max"])
            if not (lo - 1e-9 <= value <= hi + 1e-9):
                what = "oil iodine value" if q == "iodine_value_oil" else q
                msgs.append(f"{what} {value:.1f} outside {lo:g}-{hi:g}")
        if msgs:
            out.iloc[i] = f"outside Codex CXS 210 ranges for {oil}: " + ", ".join(msgs)
    return out
