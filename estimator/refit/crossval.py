"""Compare the candidates by cross-validation on a lab's own samples and pick one.

The scheme (fixed seed, so a refit is repeatable):

* fewer than :data:`LOO_BELOW` samples: leave-one-out;
* otherwise: 5-fold cross-validation repeated 10 times (scikit-learn
  ``RepeatedKFold``), each repeat a fresh shuffle.

Every candidate is fitted inside each fold only on the fold's training samples
(recalibration, scaling, ridge's inner choice of alpha, the Gaussian-process
hyperparameters), and scored on the held-out samples. Scores, with residual =
predicted - measured, computed per repeat on the held-out predictions and averaged
over the repeats:

* RMSE = sqrt(mean(residual^2)); MAE = mean |residual|; bias = mean residual;
* R^2 = 1 - sum(residual^2) / sum((measured - mean measured)^2).

The choice: the lowest cross-validated RMSE wins, except that any candidate within
:data:`TIE_TOLERANCE` (2 %) of the best RMSE ties with it, and a tie goes to the
simpler one (the complexity order of :mod:`estimator.refit.candidates`: published,
recalibrated, PLS, ridge, Gaussian process). A fitted model replaces the best
published method only if it *beats* it (below); otherwise that published method is
kept, so a model file never puts a refit that is no better into the decisions. The
mean-only baseline is scored the same way (the mean of each fold's training samples,
scored on its held-out ones) but never chosen.

**What the fit says.** A fitted model is said to *beat* a reference only when its CV
RMSE is at least :data:`BEAT_MARGIN` (10 %) below the reference's; the statement
compares the chosen model with both the best published method and the mean-only
baseline, and names each one it does not beat by that margin.

**The band.** The chosen model's band is one standard uncertainty of a new
measurement: its CV RMSE, or for a Gaussian process its own predictive standard
deviation times :attr:`CVResult.sd_scale`, the root mean square of the held-out
residuals divided by the held-out standard deviations (so the band covers the
held-out errors on average, whatever the process thought of itself).
"""

from __future__ import annotations

from collections.abc import Callable, Sequence
from dataclasses import dataclass, field

import numpy as np
import pandas as pd

from estimator.errors import InputFileError, UnknownNameError, UsageError
from estimator.profiles.profile import Profile
from estimator.refit import limits
from estimator.refit.candidates import (
    BASELINE_KIND,
    GP_MAX_TRAIN,
    GP_TUNE_MAX,
    Candidate,
    baseline_candidate,
    candidates_for,
    predict_params,
    single_threaded_blas,
)
from estimator.refit.features import TrainingDomain, compute_features, published_estimates
from estimator.refit.model_file import FittedModel

__all__ = [
    "BEAT_MARGIN",
    "INDICATOR_PROPERTIES",
    "LOO_BELOW",
    "MIN_SAMPLES",
    "TIE_TOLERANCE",
    "CVResult",
    "CVScheme",
    "PropertyFit",
    "check_property",
    "choose",
    "cross_validate",
    "cv_scheme",
    "fit_properties",
    "fit_property",
    "measured_values",
    "scores",
]

#: Below this many samples leave-one-out, from it on 5-fold x 10 repeats.
LOO_BELOW = 30
#: Folds and repeats of the repeated k-fold scheme.
N_FOLDS = 5
N_REPEATS = 10
#: Fewest measured samples a refit accepts (every candidate needs at least a handful of
#: training samples in each fold, and fewer make the comparison meaningless).
MIN_SAMPLES = 10
#: Candidates within this fraction of the best cross-validated RMSE tie with it.
TIE_TOLERANCE = 0.02
#: A model "beats" a reference only with a CV RMSE at least this fraction lower.
BEAT_MARGIN = 0.10
#: Largest seed (numpy's legacy seeds, which scikit-learn's splitters use, are 32-bit).
MAX_SEED = 2**32 - 1
#: Registry properties that are ranking indices, not measured quantities.
INDICATOR_PROPERTIES = ("oxidizability_indicator_wt_pct",)

Progress = Callable[[int], None]


@dataclass(frozen=True)
class CVScheme:
    """The held-out splits: ``repeats[r]`` is a partition of the samples into folds."""

    name: str
    seed: int
    repeats: tuple[tuple[tuple[np.ndarray, np.ndarray], ...], ...]

    @property
    def n_splits(self) -> int:
        """Number of fits per candidate."""
        return sum(len(r) for r in self.repeats)

    def describe(self) -> dict:
        """JSON-ready description of the scheme."""
        return {"name": self.name, "seed": self.seed, "repeats": len(self.repeats),
                "folds": len(self.repeats[0])}


SCHEMES = ("auto", "leave-one-out", "repeated-kfold")


def cv_scheme(n_samples: int, *, seed: int = 0, scheme: str = "auto") -> CVScheme:
    """Leave-one-out below :data:`LOO_BELOW` samples, else 5-fold x 10 repeats.

    ``scheme`` forces one of them (``"leave-one-out"`` or ``"repeated-kfold"``).

    Examples
    --------
    >>> cv_scheme(12).name, cv_scheme(12).n_splits
    ('leave-one-out', 12)
    >>> cv_scheme(40).name, cv_scheme(40).n_splits
    ('5-fold x 10 repeats', 50)
    """
    from sklearn.model_selection import LeaveOneOut, RepeatedKFold

    if scheme not in SCHEMES:
        raise UsageError(f"unknown cross-validation scheme {scheme!r}; use {', '.join(SCHEMES)}")
    dummy = np.zeros((n_samples, 1))
    loo = n_samples < LOO_BELOW if scheme == "auto" else scheme == "leave-one-out"
    if loo:
        folds = tuple((tr, te) for tr, te in LeaveOneOut().split(dummy))
        return CVScheme("leave-one-out", seed, (folds,))
    splitter = RepeatedKFold(n_splits=N_FOLDS, n_repeats=N_REPEATS, random_state=seed)
    splits = list(splitter.split(dummy))
    repeats = tuple(
        tuple(splits[r * N_FOLDS:(r + 1) * N_FOLDS]) for r in range(N_REPEATS)
    )
    return CVScheme(f"{N_FOLDS}-fold x {N_REPEATS} repeats", seed, repeats)


def scores(measured: np.ndarray, predicted: np.ndarray) -> dict[str, float]:
    """RMSE, MAE, bias (predicted - measured) and R^2 of one set of predictions.

    Examples
    --------
    >>> s = scores(np.array([1.0, 2.0, 3.0]), np.array([1.5, 2.0, 2.5]))
    >>> round(s["rmse"], 4), s["mae"], s["bias"], s["r2"]
    (0.4082, 0.3333333333333333, 0.0, 0.75)
    """
    y = np.asarray(measured, dtype=float)
    r = np.asarray(predicted, dtype=float) - y
    sst = float(((y - y.mean()) ** 2).sum())
    return {
        "rmse": float(np.sqrt(np.mean(r * r))),
        "mae": float(np.mean(np.abs(r))),
        "bias": float(np.mean(r)),
        "r2": float(1.0 - (r * r).sum() / sst) if sst > 0 else float("nan"),
    }


@dataclass(frozen=True)
class CVResult:
    """Held-out predictions ``(n_repeats, n)`` of one candidate and their mean scores."""

    candidate: Candidate
    predictions: np.ndarray
    rmse: float
    mae: float
    bias: float
    r2: float
    rmse_sd: float
    notes: tuple[str, ...] = ()
    #: Gaussian process: factor on its own predictive sd that makes the held-out
    #: standardized residuals have a root mean square of 1 (1.0 for other kinds).
    sd_scale: float = 1.0

    @property
    def heldout_mean(self) -> np.ndarray:
        """Held-out prediction of each sample, averaged over the repeats."""
        return self.predictions.mean(axis=0)


def cross_validate(
    candidate: Candidate,
    x: np.ndarray,
    y: np.ndarray,
    scheme: CVScheme,
    *,
    progress: Progress | None = None,
) -> CVResult:
    """Fit ``candidate`` on each fold's training samples and predict its held-out ones."""
    x = np.asarray(x, dtype=float)
    y = np.asarray(y, dtype=float)
    preds = np.full((len(scheme.repeats), len(y)), np.nan)
    sds = np.full((len(scheme.repeats), len(y)), np.nan)
    notes: set[str] = set()
    for r, folds in enumerate(scheme.repeats):
        for train, test in folds:
            params, fold_notes = candidate.fit(x[train], y[train], seed=scheme.seed)
            notes.update(fold_notes)
            value, sd = predict_params(candidate.kind, params, x[test])
            preds[r, test] = value
            if sd is not None:
                sds[r, test] = sd
            if progress is not None:
                progress(1)
    per_repeat = [scores(y, p) for p in preds]
    rmse = np.array([s["rmse"] for s in per_repeat])
    sd_scale = 1.0
    if candidate.kind == "gp":
        sd_scale = gp_sd_scale(y, preds, sds)
    return CVResult(
        candidate, preds, float(rmse.mean()),
        float(np.mean([s["mae"] for s in per_repeat])),
        float(np.mean([s["bias"] for s in per_repeat])),
        float(np.mean([s["r2"] for s in per_repeat])),
        float(rmse.std()) if np.ptp(rmse) > 0 else 0.0, tuple(sorted(notes)), sd_scale,
    )


def gp_sd_scale(measured: np.ndarray, predictions: np.ndarray, sds: np.ndarray) -> float:
    """Root mean square of held-out residuals over held-out predictive sds.

    Multiplying the process's own sd by this factor makes the band cover the held-out
    errors on average (a well-calibrated process gives about 1). Clipped to
    :data:`estimator.refit.limits.GP_SD_SCALE_RANGE`.

    Examples
    --------
    >>> y = np.zeros(4); p = np.array([[1.0, -1.0, 2.0, -2.0]]); sd = np.ones((1, 4))
    >>> round(gp_sd_scale(y, p, sd), 4)
    1.5811
    """
    z = (np.asarray(predictions) - np.asarray(measured)[None, :]) / np.asarray(sds)
    z = z[np.isfinite(z)]
    if z.size == 0:
        return 1.0
    lo, hi = limits.GP_SD_SCALE_RANGE
    return float(np.clip(np.sqrt(np.mean(z ** 2)), lo, hi))


def choose(results: Sequence[CVResult], tolerance: float = TIE_TOLERANCE) -> CVResult:
    """The best candidate by CV RMSE; within ``tolerance`` of it the simplest wins.

    Examples
    --------
    >>> from estimator.refit.candidates import Candidate
    >>> def res(name, rank, rmse):
    ...     return CVResult(Candidate(name, "ridge", (), rank), np.zeros((1, 1)),
    ...                     rmse, 0.0, 0.0, 0.0, 0.0)
    >>> choose([res("simple", 0, 1.015), res("complex", 5, 1.0)]).candidate.name
    'simple'
    >>> choose([res("simple", 0, 1.03), res("complex", 5, 1.0)]).candidate.name
    'complex'
    """
    results = [r for r in results if r.candidate.kind != BASELINE_KIND]
    if not results:
        raise ValueError("no candidate was evaluated")
    best = min(r.rmse for r in results)
    tied = [r for r in results if r.rmse <= best * (1.0 + tolerance)]
    return min(tied, key=lambda r: (r.candidate.complexity, r.rmse))


def _choice(results: Sequence[CVResult], best_pub: CVResult | None,
            tolerance: float) -> tuple[CVResult, CVResult | None]:
    """The candidate that goes into the model file, and the closest refit left out.

    Without a published method, :func:`choose` decides. With one, only fitted models
    that beat the best published method by :data:`BEAT_MARGIN` may replace it (the
    simplest within the tie tolerance among them); if none does, the published method
    is kept and the fitted model with the lowest CV RMSE is named as the closest.

    Examples
    --------
    >>> from estimator.refit.candidates import Candidate
    >>> def res(name, kind, rank, rmse):
    ...     return CVResult(Candidate(name, kind, (), rank), np.zeros((1, 1)),
    ...                     rmse, 0.0, 0.0, 0.0, 0.0)
    >>> pub = res("published:a", "published", 0, 1.0)
    >>> near, far = res("ridge:x", "ridge", 4, 0.905), res("gp:x", "gp", 6, 0.89)
    >>> _choice([pub, near, far], pub, 0.02)[0].candidate.name  # only the GP beats it
    'gp:x'
    >>> kept, closest = _choice([pub, near], pub, 0.02)  # 9.5 % lower: not enough
    >>> kept.candidate.name, closest.candidate.name
    ('published:a', 'ridge:x')
    """
    if best_pub is None:
        return choose(results, tolerance), None
    fitted = [r for r in results if r.candidate.kind not in ("published", BASELINE_KIND)]
    beating = [r for r in fitted if _gain(r, best_pub) >= BEAT_MARGIN]
    if beating:
        return choose(beating, tolerance), None
    closest = min(fitted, key=lambda r: r.rmse) if fitted else None
    return best_pub, (closest if closest is not None and closest.rmse < best_pub.rmse
                      else None)


@dataclass(frozen=True)
class PropertyFit:
    """Everything a refit of one property found: scores, held-out predictions, the choice."""

    property: str
    unit: str
    samples: tuple[str, ...]
    measured: np.ndarray
    wt_pct: np.ndarray
    scheme: CVScheme
    results: tuple[CVResult, ...]
    chosen: CVResult
    best_published: CVResult | None
    statement: str
    model: FittedModel
    skipped: tuple[str, ...] = field(default=())
    baseline: CVResult | None = None
    notes: tuple[str, ...] = field(default=())

    def score_table(self) -> pd.DataFrame:
        """One row per candidate, best CV RMSE first, with the choice marked."""
        rows = []
        for r in sorted(self.results, key=lambda r: r.rmse):
            rows.append({
                "property": self.property,
                "candidate": r.candidate.name,
                "kind": r.candidate.kind,
                "complexity": r.candidate.complexity,
                "cv_rmse": r.rmse,
                "cv_mae": r.mae,
                "cv_bias": r.bias,
                "cv_r2": r.r2,
                "cv_rmse_sd": r.rmse_sd,
                "chosen": r is self.chosen,
                "note": "; ".join(r.notes),
            })
        return pd.DataFrame(rows)


def measured_values(profile: Profile, property_name: str) -> np.ndarray:
    """The measured column of a property from a profile's metadata, as floats (NaN = blank).

    Raises InputFileError naming the file, row and column of a missing column or a
    cell that is not a number.
    """
    label = profile.source or "input"
    if property_name not in profile.metadata.columns:
        present = [c for c in profile.metadata.columns if c in _properties()]
        hint = f"; measured columns present: {', '.join(present)}" if present else ""
        raise InputFileError(f"{label}: missing measured column {property_name!r}{hint}")
    column = profile.metadata[property_name]
    if pd.api.types.is_numeric_dtype(column) and not pd.api.types.is_bool_dtype(column):
        return _plausible(column.to_numpy(dtype=float), profile, property_name)
    text = column.map(lambda v: v.strip().replace(",", ".") if isinstance(v, str) else v)
    parsed = pd.to_numeric(text.replace("", np.nan), errors="coerce")
    bad = parsed.isna() & column.notna() & (text != "")
    if bad.any():
        i = int(np.argmax(bad.to_numpy()))
        raise InputFileError(
            f"{label}: row {profile.rows.iloc[i]}, column {property_name!r}: "
            f"{column.iloc[i]!r} is not a number"
        )
    return _plausible(parsed.to_numpy(dtype=float), profile, property_name)


#: Physically plausible ranges of measured FAME properties (see :mod:`~estimator.refit.limits`).
PLAUSIBLE = limits.PLAUSIBLE


def _plausible(values: np.ndarray, profile: Profile, property_name: str) -> np.ndarray:
    lo, hi = PLAUSIBLE.get(property_name, (-np.inf, np.inf))
    bad = np.isfinite(values) & ((values < lo) | (values > hi)) | np.isinf(values)
    if bad.any():
        i = int(np.argmax(bad))
        raise InputFileError(
            f"{profile.source or 'input'}: row {profile.rows.iloc[i]}, column "
            f"{property_name!r}: {values[i]:g} is not a plausible measurement "
            f"({lo:g} to {hi:g}); check the value and its unit"
        )
    return values


def _properties() -> dict[str, str]:
    from estimator.properties.methods import PROPERTIES

    return PROPERTIES


def check_property(property_name: str) -> tuple[str, list[str]]:
    """Unit and published methods of a property a refit accepts; raise for a bad name."""
    from estimator.properties.methods import PROPERTIES, methods_for

    if property_name in INDICATOR_PROPERTIES:
        raise UsageError(
            f"--property {property_name}: a ranking indicator, not a measured quantity; "
            "fit a measured property such as oxidation_stability_110C_h"
        )
    if property_name not in PROPERTIES:
        valid = [p for p in PROPERTIES if p not in INDICATOR_PROPERTIES]
        raise UnknownNameError(
            f"unknown property {property_name!r}; valid properties: {', '.join(valid)}"
        )
    # Temperature-dependent methods are taken at the property's own temperature.
    return PROPERTIES[property_name], list(methods_for(property_name))


def fit_property(
    profile: Profile,
    property_name: str,
    *,
    seed: int = 0,
    tolerance: float = TIE_TOLERANCE,
    min_samples: int = MIN_SAMPLES,
    kinds: Sequence[str] | None = None,
    scheme: str = "auto",
    progress: Progress | None = None,
) -> PropertyFit:
    """Cross-validate every candidate for one measured property and fit the chosen one.

    Parameters
    ----------
    profile : Profile
        Lab samples; the measured values are the metadata column named as the property
        (blank cells: that sample is left out of this property's fit).
    property_name : str
        A property of the method registry, e.g. ``cetane_number`` or ``cfpp_C``.
    seed : int
        Seed of the repeated k-fold shuffles and the Gaussian-process optimizer.
    tolerance : float
        Tie tolerance on the CV RMSE (fraction; 0.02 = 2 %).
    min_samples : int
        Fewest measured samples accepted.
    kinds : sequence of str, optional
        Restrict the candidates to these kinds (default: all).
    scheme : {'auto', 'leave-one-out', 'repeated-kfold'}
        Cross-validation scheme; ``auto`` picks by the number of samples.
    progress : callable, optional
        Called with the number of fold fits just done (for a progress bar).
    """
    check_options(seed, tolerance)
    unit, methods = check_property(property_name)
    label = profile.source or "input"
    y_all = measured_values(profile, property_name)
    mask = np.isfinite(y_all)
    n = int(mask.sum())
    if n < min_samples:
        raise InputFileError(
            f"{label}: only {n} samples have a measured {property_name}; a refit needs at "
            f"least {min_samples} (add measured samples)"
        )
    y = y_all[mask]
    if np.ptp(y) == 0:
        raise InputFileError(
            f"{label}: column {property_name!r} has the same value ({y[0]:g}) in all {n} "
            "measured samples; a refit needs measurements that vary"
        )
    wt = profile.wt_pct[mask]
    samples = tuple(np.asarray(profile.samples, dtype=object)[mask])
    estimates = _published(wt, property_name, methods)
    candidates = candidates_for(property_name, methods)
    if kinds is not None:
        candidates = [c for c in candidates if c.kind in kinds]
    candidates = [baseline_candidate(), *candidates]
    splits = cv_scheme(n, seed=seed, scheme=scheme)
    with single_threaded_blas():
        results, skipped, matrices = _evaluate(candidates, wt, y, estimates, samples, splits,
                                               progress)
        published = [r for r in results if r.candidate.kind == "published"]
        best_pub = min(published, key=lambda r: r.rmse) if published else None
        chosen, runner_up = _choice(results, best_pub, tolerance)
        params, notes = chosen.candidate.fit(matrices[chosen.candidate.name], y, seed=seed)
    baseline = results[0]
    statement = _statement(chosen, best_pub, baseline, tolerance, n, property_name,
                           runner_up=runner_up)
    fit_notes = gp_cost_note(n) if any(r.candidate.kind == "gp" for r in results) else ""
    domain = TrainingDomain.from_training(wt)
    model = FittedModel(
        property=property_name,
        unit=unit,
        candidate=chosen.candidate.name,
        kind=chosen.candidate.kind,
        method=chosen.candidate.method,
        features=chosen.candidate.features,
        params=params,
        domain=domain,
        band_sd=float(chosen.rmse),
        gp_sd_scale=float(chosen.sd_scale),
        n_samples=n,
        cv={
            "scheme": splits.describe(),
            "tie_tolerance": tolerance,
            "chosen": chosen.candidate.name,
            "statement": statement,
            "beat_margin": BEAT_MARGIN,
            "scores": [
                {"candidate": r.candidate.name, "kind": r.candidate.kind,
                 "complexity": r.candidate.complexity, "rmse": r.rmse, "mae": r.mae,
                 "bias": r.bias, "r2": r.r2}
                for r in results
            ],
        },
        notes=tuple(notes) + ((fit_notes,) if fit_notes and chosen.candidate.kind == "gp"
                              else ()),
    )
    return PropertyFit(
        property_name, unit, samples, y, wt, splits, tuple(results), chosen, best_pub,
        statement, model, tuple(skipped), baseline, (fit_notes,) if fit_notes else (),
    )


def check_options(seed: int, tolerance: float) -> None:
    """Refuse a seed outside 0 to 2**32 - 1 or a tie tolerance that is not a fraction.

    Examples
    --------
    >>> check_options(-1, 0.02)
    Traceback (most recent call last):
    ...
    estimator.errors.UsageError: seed -1: must be a whole number from 0 to 4294967295
    """
    if isinstance(seed, bool) or not isinstance(seed, (int, np.integer)) or not (
        0 <= seed <= MAX_SEED
    ):
        raise UsageError(f"seed {seed}: must be a whole number from 0 to {MAX_SEED}")
    if not isinstance(tolerance, (int, float, np.floating)) or not (
        np.isfinite(tolerance) and 0.0 <= tolerance <= 0.5
    ):
        raise UsageError(f"tie tolerance {tolerance}: must be a number from 0 to 0.5 "
                         "(0 % to 50 %)")


def gp_cost_note(n: int) -> str:
    """How the Gaussian process was fitted on a large lab set ("" when on all samples)."""
    if n <= GP_TUNE_MAX:
        return ""
    cond = "all of them" if n <= GP_MAX_TRAIN else f"a seeded random {GP_MAX_TRAIN}"
    return (
        f"Gaussian process on {n} samples (more than {GP_TUNE_MAX}): in every fold, and "
        f"for the model file, its kernel is tuned on a seeded random {GP_TUNE_MAX} of the "
        f"training samples and the process is conditioned on {cond} "
        f"(at most {GP_MAX_TRAIN}); scores stay held-out."
    )


def _evaluate(candidates, wt, y, estimates, samples, splits, progress):
    """Cross-validate each candidate; skip those a published method cannot evaluate."""
    results, skipped, matrices = [], [], {}
    for cand in candidates:
        x = compute_features(wt, cand.features, estimates=estimates)
        if not np.isfinite(x).all():
            i = int(np.argmax(~np.isfinite(x).all(axis=1)))
            skipped.append(f"{cand.name}: no value for sample {samples[i]!r}")
            if progress is not None:
                progress(splits.n_splits)
            continue
        matrices[cand.name] = x
        results.append(cross_validate(cand, x, y, splits, progress=progress))
    return results, skipped, matrices


def fit_properties(
    profile: Profile,
    properties: Sequence[str],
    *,
    seed: int = 0,
    tolerance: float = TIE_TOLERANCE,
    min_samples: int = MIN_SAMPLES,
    scheme: str = "auto",
    progress: Progress | None = None,
) -> list[PropertyFit]:
    """:func:`fit_property` for each property, in order (duplicates refused).

    Properties are fitted in parallel worker processes when the machine has the cores
    (:mod:`estimator.parallel`); the results are the same either way.
    """
    if not properties:
        raise UsageError("give at least one --property to fit")
    dup = [p for i, p in enumerate(properties) if p in properties[:i]]
    if dup:
        raise UsageError(f"--property {dup[0]} is given twice")
    from estimator.parallel import run_jobs

    def one(prop: str, tick: Progress | None) -> PropertyFit:
        return fit_property(profile, prop, seed=seed, tolerance=tolerance,
                            min_samples=min_samples, scheme=scheme, progress=tick)

    # the properties share nothing: on two or more cores they run side by side
    # (forked workers; the results do not depend on how many)
    return run_jobs(one, list(properties), progress=progress)


def total_fits(profile: Profile, properties: Sequence[str], scheme: str = "auto") -> int:
    """How many fold fits :func:`fit_properties` will run (for a progress bar)."""
    total = 0
    for prop in properties:
        try:
            _, methods = check_property(prop)
            n = int(np.isfinite(measured_values(profile, prop)).sum())
        except (InputFileError, UsageError, UnknownNameError):
            continue
        if n < 2:
            continue
        loo = n < LOO_BELOW if scheme == "auto" else scheme == "leave-one-out"
        n_splits = n if loo else N_FOLDS * N_REPEATS
        total += n_splits * (1 + len(candidates_for(prop, methods)))
    return total


def _published(wt: np.ndarray, prop: str, methods: Sequence[str]) -> dict[str, np.ndarray]:
    from estimator.refit.features import estimate_feature

    with np.errstate(all="ignore"):
        return published_estimates(wt, [estimate_feature(prop, m) for m in methods])


def _gain(model: CVResult, reference: CVResult) -> float:
    """Fraction by which ``model``'s CV RMSE is below ``reference``'s."""
    return 1.0 - model.rmse / reference.rmse if reference.rmse > 0 else 0.0


def _pct(fraction: float) -> str:
    return f"{100.0 * fraction:.0f} %"


def _statement(
    chosen: CVResult,
    best_pub: CVResult | None,
    baseline: CVResult,
    tolerance: float,
    n: int,
    property_name: str,
    runner_up: CVResult | None = None,
) -> str:
    """What the fit found, in words: the choice, its band, and whom it beats (or not).

    ``runner_up`` is the fitted model with the lowest CV RMSE when it was not chosen
    because it does not beat the best published method.
    """
    from estimator.refit.wording import candidate_words, method_words

    margin = _pct(BEAT_MARGIN)
    rule = (f"'beats' means a CV RMSE at least {margin} lower; ties within "
            f"{_pct(tolerance)} go to the simpler model")
    base = f"the mean-only baseline (CV RMSE {baseline.rmse:.3g})"
    name = candidate_words(chosen.candidate.name, property_name)
    kind = chosen.candidate.kind
    band = (f"band ± {chosen.rmse:.3g} (one standard uncertainty: the CV RMSE)"
            if kind != "gp" else
            f"band: its own sd x {chosen.sd_scale:.3g} (one standard uncertainty, "
            "calibrated on the held-out residuals)")
    head = f"{name}, CV RMSE {chosen.rmse:.3g}, CV R² {chosen.r2:.2f}; {band}"
    gain_base = _gain(chosen, baseline)
    vs_base = (f"it beats {base} by {_pct(gain_base)}" if gain_base >= BEAT_MARGIN else
               f"it does not beat {base} by {margin}")
    if best_pub is None:
        return (f"No published method could be evaluated on all {n} samples. Chosen: "
                f"{head}. {vs_base.capitalize()} ({rule}).")
    pub_name = method_words(property_name, best_pub.candidate.method)
    pub = f"the best published method, {pub_name} (CV RMSE {best_pub.rmse:.3g})"
    if kind == "published":
        closest = ""
        if runner_up is not None:
            closest = (f" (the closest, {candidate_words(runner_up.candidate.name, property_name)}"
                       f", CV RMSE {runner_up.rmse:.3g}, is within {margin} of it)")
        return (f"Kept as is: {head}. No model fitted on these {n} samples beats this best "
                f"published method{closest}; {vs_base} ({rule}).")
    gain_pub = _gain(chosen, best_pub)
    if gain_pub >= BEAT_MARGIN and gain_base >= BEAT_MARGIN:
        return (f"Chosen: {head}. It beats {pub} by {_pct(gain_pub)} and {base} by "
                f"{_pct(gain_base)} ({rule}).")
    missed = [what for what, gain in ((pub, gain_pub), (base, gain_base))
              if gain < BEAT_MARGIN]
    return (f"Chosen: {head}. It beats {pub} by {_pct(gain_pub)}, but it does not beat "
            f"{' nor '.join(missed)} by {margin}: the composition explains little of these "
            f"measurements, so read its band with care ({rule}).")
