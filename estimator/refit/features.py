"""Features a refit can use, computed by name from a composition, and the training domain.

A feature is named, so a model file can list its features and a new sample can be
turned into the same numbers later:

* a species key (``C18:1``): its mass % on the FAME basis [wt %];
* ``other_species_wt_pct``: everything outside :data:`MAIN_SPECIES` [wt %];
* a descriptor name of :func:`estimator.properties.descriptors.descriptors`
  (``lcsf_wt_pct``, ``bape_wt_pct`` ...), in the descriptor's unit;
* ``estimate:<property>:<method>``: a published method's estimate, evaluated by the method
  registry (:mod:`estimator.properties.methods`), in the property's unit.

The **training domain** says what a model has seen. It is always measured on the
composition (:data:`DOMAIN_FEATURES`, all in wt %, so distances are comparable across
features) whatever features the model itself uses:

* per-feature bounds: training minimum and maximum, widened on both sides by
  :data:`BOUND_MARGIN_FRACTION` of the training range but at least
  :data:`BOUND_MARGIN_FLOOR_WT_PCT` (so a minor ester the lab saw at 0.2 % does not flag
  a lot with 0.3 %), the lower bound never below 0;
* a distance threshold: the 95th percentile of the leave-one-out distances of the
  training samples to their nearest other training sample, in standardized units
  (each feature divided by its training standard deviation, floored at
  :data:`SCALE_FLOOR_WT_PCT` so a species that barely varies does not dominate).
  A lab set larger than :data:`MAX_DOMAIN_POINTS` keeps a seeded random
  :data:`MAX_DOMAIN_POINTS` of its samples as the domain's points (bounds, centre and
  scale still come from all samples), so a model file stays bounded.

A sample is in the domain when it lies within every bound and no farther from its
nearest training sample than the threshold.
"""

from __future__ import annotations

from collections.abc import Mapping, Sequence
from dataclasses import dataclass

import numpy as np

from estimator.errors import ModelFileError
from estimator.properties.descriptors import DESCRIPTOR_UNITS, descriptors
from estimator.tables import species_keys

__all__ = [
    "BOUND_MARGIN_FLOOR_WT_PCT",
    "BOUND_MARGIN_FRACTION",
    "DESCRIPTOR_FEATURES",
    "DOMAIN_FEATURES",
    "DOMAIN_PERCENTILE",
    "FEATURE_SETS",
    "MAX_DOMAIN_POINTS",
    "MAIN_SPECIES",
    "OTHER_SPECIES",
    "SCALE_FLOOR_WT_PCT",
    "TrainingDomain",
    "compute_features",
    "estimate_feature",
    "feature_unit",
    "parse_estimate_feature",
]

#: The species a lab GC report of common oils and fats quantifies (C12-C22); the rest
#: is lumped into :data:`OTHER_SPECIES`. Choice of the project (common practice).
MAIN_SPECIES = (
    "C12:0", "C14:0", "C16:0", "C16:1", "C18:0", "C18:1", "C18:2", "C18:3",
    "C20:0", "C20:1", "C22:0", "C22:1",
)
#: Name of the lumped feature: 100 minus the sum of :data:`MAIN_SPECIES` [wt %].
OTHER_SPECIES = "other_species_wt_pct"

#: Descriptors a fitted model may use: chain length, unsaturation, the long-chain
#: saturated factor (cold flow) and the bis-allylic count (oxidation). Mean molar mass
#: is left out because the saponification value carries the same information.
DESCRIPTOR_FEATURES = (
    "saponification_value_mgKOH_g",
    "iodine_value_gI2_100g",
    "du_ramos_wt_pct",
    "lcsf_wt_pct",
    "ape_wt_pct",
    "bape_wt_pct",
    "sfa_wt_pct",
    "linolenic_wt_pct",
    "mean_chain_length_carbons",
)

#: Named feature sets of the fitted candidates.
FEATURE_SETS: dict[str, tuple[str, ...]] = {
    "composition": (*MAIN_SPECIES, OTHER_SPECIES),
    "descriptors": DESCRIPTOR_FEATURES,
}

#: The composition features the training domain is measured on.
DOMAIN_FEATURES = (*MAIN_SPECIES, OTHER_SPECIES)
#: Bounds are widened by this fraction of each training range on both sides ...
BOUND_MARGIN_FRACTION = 0.05
#: ... but by at least this much [wt %] (about the size of GC repeatability on minor
#: peaks; common practice, no standard value).
BOUND_MARGIN_FLOOR_WT_PCT = 1.0
#: At most this many bound violations are named per sample in :meth:`TrainingDomain.reasons`.
MAX_REASONS = 3
#: Smallest standard deviation used to standardize a domain feature [wt %].
SCALE_FLOOR_WT_PCT = 1.0
#: Percentile of the leave-one-out nearest-neighbour distances taken as threshold.
DOMAIN_PERCENTILE = 95.0
#: At most this many training samples are kept as the domain's points [samples].
MAX_DOMAIN_POINTS = 5000

#: Feature values smaller than this (in the feature's unit) are floating-point noise.
FEATURE_NOISE = 1e-9

_ESTIMATE_PREFIX = "estimate:"


def estimate_feature(property_name: str, method: str) -> str:
    """The feature name of a published method's estimate, ``estimate:<property>:<method>``."""
    return f"{_ESTIMATE_PREFIX}{property_name}:{method}"


def parse_estimate_feature(name: str) -> tuple[str, str] | None:
    """``(property, method)`` of an ``estimate:`` feature name, else None.

    Examples
    --------
    >>> parse_estimate_feature("estimate:cetane_number:bamgboye2008")
    ('cetane_number', 'bamgboye2008')
    >>> parse_estimate_feature("C18:1") is None
    True
    """
    if not name.startswith(_ESTIMATE_PREFIX):
        return None
    prop, sep, method = name[len(_ESTIMATE_PREFIX):].partition(":")
    if not sep or not prop or not method:
        return None
    return prop, method


def feature_unit(name: str) -> str:
    """The unit of a feature (``wt %`` for species, the descriptor unit, else the name)."""
    if name in species_keys() or name == OTHER_SPECIES:
        return "wt %"
    if name in DESCRIPTOR_UNITS:
        return DESCRIPTOR_UNITS[name]
    parsed = parse_estimate_feature(name)
    if parsed is not None:
        return f"unit of {parsed[0]}"
    raise KeyError(name)


def is_known_feature(name: str) -> bool:
    """True for a species key, the lumped other species, a descriptor or an estimate name."""
    return (
        name in species_keys()
        or name == OTHER_SPECIES
        or name in DESCRIPTOR_UNITS
        or parse_estimate_feature(name) is not None
    )


def compute_features(
    wt_pct: np.ndarray,
    names: Sequence[str],
    *,
    estimates: Mapping[str, np.ndarray] | None = None,
) -> np.ndarray:
    """The feature matrix of compositions, one column per feature name, in order.

    Parameters
    ----------
    wt_pct : ndarray, shape (n, n_species)
        FAME mass %, columns in :func:`estimator.tables.species_keys` order. [wt %]
    names : sequence of str
        Feature names (see the module docstring).
    estimates : mapping, optional
        Precomputed ``estimate:`` features by name (each shape (n,)); missing ones are
        evaluated with the method registry.

    Returns
    -------
    ndarray, shape (n, len(names))
        Feature values; NaN where a published method is undefined for a sample.

    Examples
    --------
    >>> import numpy as np
    >>> from estimator.tables import species_keys
    >>> w = np.zeros((1, len(species_keys())))
    >>> w[0, species_keys().index("C18:1")] = 90.0; w[0, species_keys().index("C20:5")] = 10.0
    >>> compute_features(w, ["C18:1", "other_species_wt_pct", "du_ramos_wt_pct"]).tolist()
    [[90.0, 10.0, 110.0]]
    """
    w = np.asarray(wt_pct, dtype=float)
    keys = species_keys()
    if w.ndim != 2 or w.shape[1] != len(keys):
        raise ValueError(f"wt_pct must have shape (n, {len(keys)}), got {w.shape}")
    out = np.empty((w.shape[0], len(names)))
    desc: dict[str, np.ndarray] | None = None
    pending: dict[str, list[int]] = {}
    rest_idx = [i for i, k in enumerate(keys) if k not in MAIN_SPECIES]
    for j, name in enumerate(names):
        if name in keys:
            out[:, j] = w[:, keys.index(name)]
        elif name == OTHER_SPECIES:
            out[:, j] = w[:, rest_idx].sum(axis=1)
        elif name in DESCRIPTOR_UNITS:
            if desc is None:
                desc = descriptors(w)
            out[:, j] = desc[name]
        elif estimates is not None and name in estimates:
            out[:, j] = np.asarray(estimates[name], dtype=float)
        elif parse_estimate_feature(name) is not None:
            pending.setdefault(name, []).append(j)
        else:
            raise KeyError(f"unknown feature {name!r}")
    if pending:
        values = published_estimates(w, list(pending))
        for name, cols in pending.items():
            out[:, cols] = values[name][:, None]
    # Rounding noise (e.g. 1e-14 wt % of a species that is absent) would become a
    # full-size feature once standardized; below FEATURE_NOISE it is zero.
    out[np.abs(out) < FEATURE_NOISE] = 0.0
    return out


def published_estimates(wt_pct: np.ndarray, names: Sequence[str]) -> dict[str, np.ndarray]:
    """Evaluate ``estimate:<property>:<method>`` features with the method registry.

    The same :meth:`estimator.properties.methods.Method.evaluate` that
    :func:`estimator.properties.predict.estimate` calls; one array per name (NaN where
    the method gives no value for a sample).
    """
    from estimator.properties.methods import get_method

    w = np.asarray(wt_pct, dtype=float)
    desc = descriptors(w)
    out = {}
    for name in names:
        parsed = parse_estimate_feature(name)
        if parsed is None:
            raise KeyError(f"not an estimate feature: {name!r}")
        out[name] = get_method(*parsed).evaluate(w, desc).astype(float)
    return out


@dataclass(frozen=True)
class TrainingDomain:
    """Per-feature bounds and a nearest-neighbour distance threshold of a training set.

    ``points`` are the training samples in standardized units (``(x - center) / scale``).
    """

    features: tuple[str, ...]
    lower: np.ndarray
    upper: np.ndarray
    center: np.ndarray
    scale: np.ndarray
    points: np.ndarray
    threshold: float

    @classmethod
    def from_training(cls, wt_pct: np.ndarray) -> TrainingDomain:
        """The domain of training compositions (needs at least three samples).

        Examples
        --------
        >>> import numpy as np
        >>> from estimator.tables import species_keys
        >>> i = species_keys().index("C18:1"); j = species_keys().index("C18:2")
        >>> w = np.zeros((5, len(species_keys())))
        >>> w[:, i] = [60, 62, 64, 66, 68]; w[:, j] = 100 - w[:, i]
        >>> dom = TrainingDomain.from_training(w)
        >>> bool(dom.contains(w).all())
        True
        >>> far = np.zeros((1, len(species_keys()))); far[0, species_keys().index("C12:0")] = 100
        >>> bool(dom.contains(far)[0])
        False
        """
        x = compute_features(wt_pct, DOMAIN_FEATURES)
        if x.shape[0] < 3:
            raise ValueError("a training domain needs at least three samples")
        lo, hi = x.min(axis=0), x.max(axis=0)
        margin = np.maximum(BOUND_MARGIN_FRACTION * (hi - lo), BOUND_MARGIN_FLOOR_WT_PCT)
        center = x.mean(axis=0)
        scale = np.maximum(x.std(axis=0), SCALE_FLOOR_WT_PCT)
        points = (x - center) / scale
        if len(points) > MAX_DOMAIN_POINTS:
            keep = np.random.default_rng(0).permutation(len(points))[:MAX_DOMAIN_POINTS]
            points = points[np.sort(keep)]
        threshold = float(np.percentile(_nearest(points, points, skip_self=True),
                                        DOMAIN_PERCENTILE))
        lower = np.maximum(lo - margin, 0.0)
        return cls(DOMAIN_FEATURES, lower, hi + margin, center, scale, points, threshold)

    def distance(self, wt_pct: np.ndarray) -> np.ndarray:
        """Standardized Euclidean distance of each sample to its nearest training sample [1]."""
        x = compute_features(wt_pct, self.features)
        return _nearest((x - self.center) / self.scale, self.points)

    def within_bounds(self, wt_pct: np.ndarray) -> np.ndarray:
        """True where every feature lies within the widened training bounds."""
        x = compute_features(wt_pct, self.features)
        return ((x >= self.lower) & (x <= self.upper)).all(axis=1)

    def contains(self, wt_pct: np.ndarray) -> np.ndarray:
        """True where a sample is within the bounds and the distance threshold."""
        return self.within_bounds(wt_pct) & (self.distance(wt_pct) <= self.threshold)

    def reasons(self, wt_pct: np.ndarray) -> list[str]:
        """Why each sample is outside the domain ("" where it is inside).

        Examples
        --------
        >>> import numpy as np
        >>> from estimator.tables import species_keys
        >>> i = species_keys().index("C18:1"); j = species_keys().index("C18:2")
        >>> w = np.zeros((5, len(species_keys())))
        >>> w[:, i] = [60, 62, 64, 66, 68]; w[:, j] = 100 - w[:, i]
        >>> far = np.zeros((1, len(species_keys()))); far[0, species_keys().index("C12:0")] = 100
        >>> TrainingDomain.from_training(w).reasons(far)[0].split("; ")[0]
        'C12:0 100 wt % outside the lab range 0-1 wt %'
        """
        x = compute_features(wt_pct, self.features)
        dist = _nearest((x - self.center) / self.scale, self.points)
        width = np.maximum(self.upper - self.lower, 1e-9)
        excess = np.maximum(self.lower - x, 0.0) + np.maximum(x - self.upper, 0.0)
        out = []
        for row, ex, d in zip(x, excess / width, dist):
            worst = [j for j in np.argsort(-ex, kind="stable") if ex[j] > 0]
            parts = [
                f"{self.features[j]} {row[j]:.3g} wt % outside the lab range "
                f"{self.lower[j]:.3g}-{self.upper[j]:.3g} wt %"
                for j in worst[:MAX_REASONS]
            ]
            if len(worst) > MAX_REASONS:
                more = len(worst) - MAX_REASONS
                parts.append(f"{more} more ester{'s' if more > 1 else ''} outside the lab range")
            if d > self.threshold:
                parts.append(
                    f"{d:.2f} standardized units from the nearest training sample "
                    f"(threshold {self.threshold:.2f})"
                )
            out.append("; ".join(parts))
        return out

    def to_dict(self) -> dict:
        """Plain JSON-ready data (lists of floats)."""
        return {
            "features": list(self.features),
            "lower": self.lower.tolist(),
            "upper": self.upper.tolist(),
            "center": self.center.tolist(),
            "scale": self.scale.tolist(),
            "points": self.points.tolist(),
            "threshold": self.threshold,
            "rule": (
                f"in domain: every feature within training min/max widened by "
                f"{BOUND_MARGIN_FRACTION:.0%} of its range (at least "
                f"{BOUND_MARGIN_FLOOR_WT_PCT:g} wt %, not below 0), and standardized Euclidean "
                f"distance to the nearest training sample <= threshold (the "
                f"{DOMAIN_PERCENTILE:g}th percentile of leave-one-out nearest distances)"
            ),
        }

    @classmethod
    def from_dict(cls, data: Mapping) -> TrainingDomain:
        """Rebuild from :meth:`to_dict` output (already type-checked by the loader)."""
        features = tuple(data["features"])
        if features != DOMAIN_FEATURES:
            raise ModelFileError(
                "domain.features differ from this version's composition features "
                f"({', '.join(DOMAIN_FEATURES)}); refit with 'fame-estimator fit'"
            )
        return cls(
            features,
            np.asarray(data["lower"], dtype=float),
            np.asarray(data["upper"], dtype=float),
            np.asarray(data["center"], dtype=float),
            np.asarray(data["scale"], dtype=float),
            np.asarray(data["points"], dtype=float).reshape(-1, len(features)),
            float(data["threshold"]),
        )


#: Nearest-neighbour searches work on blocks of this many distances, so memory stays
#: flat for any number of samples.
BLOCK_ENTRIES = 2_000_000


def _nearest(a: np.ndarray, b: np.ndarray, *, skip_self: bool = False) -> np.ndarray:
    """Euclidean distance of each row of ``a`` to its nearest row of ``b``.

    ``skip_self``: ``a`` is ``b`` and a row is not its own neighbour (leave-one-out).
    Computed in blocks of rows of ``a``: the squared-distance expansion picks the nearest
    row (two rows whose distances differ by less than rounding may swap), whose distance
    is then computed exactly from the difference.
    """
    a = np.asarray(a, dtype=float)
    b = np.asarray(b, dtype=float)
    out = np.empty(len(a))
    b_sq = np.einsum("ij,ij->i", b, b)
    step = max(1, BLOCK_ENTRIES // max(len(b), 1))
    for start in range(0, len(a), step):
        block = a[start:start + step]
        sq = np.einsum("ij,ij->i", block, block)[:, None] + b_sq[None, :] - 2.0 * block @ b.T
        rows = np.arange(len(block))
        if skip_self:
            sq[rows, start + rows] = np.inf
        # the expansion finds the nearest row; its distance is then taken exactly
        diff = block - b[np.argmin(sq, axis=1)]
        out[start:start + step] = np.sqrt(np.einsum("ij,ij->i", diff, diff))
    return out
