"""The candidate models a refit compares, each fitted to plain parameters.

Every candidate's :meth:`Candidate.fit` returns a plain dict of numbers (the
parameters a model file stores) and :func:`predict_params` evaluates such a dict with
numpy alone, so a fitted model, a cross-validation fold and a model file read back
all predict through the same code. scikit-learn is used only inside the fitting
functions, and only through its public attributes.

Kinds, simplest first (this is the complexity order used to break ties):

0. ``published``: a published method as is, no parameter fitted;
1. ``recalibrated``: ``a + b * estimate`` of a published method (two parameters);
2. ``pls``: partial least squares with :data:`PLS_COMPONENTS` latent components;
3. ``ridge``: ridge regression, one shrunk weight per feature, alpha by inner
   leave-one-out (generalised) cross-validation over :data:`RIDGE_ALPHAS`;
4. ``gp``: a Gaussian process (constant x isotropic RBF + white noise kernel) whose
   prediction depends on every training sample; hyperparameters by maximum marginal
   likelihood, one L-BFGS-B start from constant 1, length scale 1, noise 0.1 (all in
   standardized units), so a refit is deterministic.

Within a kind the descriptor set (9 features) comes before the composition set (13);
all published methods share rank 0 and all recalibrations rank 1 (ties among them go
to the lower RMSE). Ranks: published 0, recalibrated 1, pls:descriptors 2,
pls:composition 3, ridge:descriptors 4, ridge:composition 5, gp:descriptors 6.
All features are standardized (training mean and standard deviation) before ridge,
PLS and the Gaussian process.

Beside them, every refit scores a **mean-only baseline** (kind ``mean``,
:func:`baseline_candidate`): the mean of the training samples, composition ignored.
It is never chosen; it is the yardstick a model must beat to be said to explain
anything (a model no better than it has learnt nothing from the composition).

**Cost of the Gaussian process.** A Gaussian process grows with the cube of its
training samples. Up to :data:`GP_TUNE_MAX` training samples it is fitted as above on
all of them. Beyond, the kernel is tuned (same optimizer, same start) on a seeded
random :data:`GP_TUNE_MAX` of the training samples, and the process is then
conditioned on a seeded random :data:`GP_MAX_TRAIN` of them (a superset of the
tuning subset; all of them when fewer), with features and target standardized on all
training samples. This runs inside every cross-validation fold on the fold's training
samples only, so the held-out scores stay honest, and a fit costs at most one
:data:`GP_TUNE_MAX`-sample optimization plus one :data:`GP_MAX_TRAIN`-sample
Cholesky factorization whatever the size of the lab set. A model file therefore
holds at most :data:`GP_MAX_TRAIN` training rows.
"""

from __future__ import annotations

import warnings
from collections.abc import Mapping, Sequence
from dataclasses import dataclass

import numpy as np

from estimator.parallel import single_threaded_blas
from estimator.refit.features import FEATURE_SETS, estimate_feature

__all__ = [
    "BASELINE_KIND",
    "GP_MAX_TRAIN",
    "GP_TUNE_MAX",
    "KINDS",
    "PLS_COMPONENTS",
    "RIDGE_ALPHAS",
    "Candidate",
    "baseline_candidate",
    "candidates_for",
    "predict_params",
    "single_threaded_blas",
    "sklearn_estimator",
]

#: Kinds in complexity order, simplest first (the kinds a model file may hold).
KINDS = ("published", "recalibrated", "pls", "ridge", "gp")
#: Kind of the mean-only baseline (scored beside the candidates, never chosen).
BASELINE_KIND = "mean"
#: Ridge penalties searched by the inner cross-validation (standardized features).
RIDGE_ALPHAS = tuple(float(a) for a in np.logspace(-3, 3, 25))
#: Latent components of the PLS candidates.
PLS_COMPONENTS = 2
#: Gaussian process: at most this many training samples tune the kernel [samples].
GP_TUNE_MAX = 120
#: Gaussian process: at most this many training samples condition the process (and are
#: stored in a model file) [samples].
GP_MAX_TRAIN = 500
#: Gaussian process: jitter added to the kernel diagonal, as scikit-learn's default.
GP_JITTER = 1e-10
_FEATURE_SET_ORDER = ("descriptors", "composition")


@dataclass(frozen=True)
class Candidate:
    """One model to compare: a kind, its features and its place in the complexity order."""

    name: str
    kind: str
    features: tuple[str, ...]
    complexity: int
    method: str = ""  # the published method, for published/recalibrated

    def fit(self, x: np.ndarray, y: np.ndarray, *, seed: int = 0) -> tuple[dict, list[str]]:
        """Fit on features ``x`` (n, d) and target ``y`` (n,); return (params, notes)."""
        x = np.asarray(x, dtype=float)
        y = np.asarray(y, dtype=float)
        if self.kind == "published":
            return {}, []
        if self.kind == BASELINE_KIND:
            return {"mean": float(y.mean())}, []
        if self.kind == "recalibrated":
            return _fit_recalibrated(x, y), []
        if self.kind == "ridge":
            return _fit_ridge(x, y), []
        if self.kind == "pls":
            return _fit_pls(x, y), []
        if self.kind == "gp":
            return _fit_gp(x, y, seed=seed)
        raise ValueError(f"unknown candidate kind {self.kind!r}")

    def predict(self, params: Mapping, x: np.ndarray) -> np.ndarray:
        """Predictions of fitted ``params`` on features ``x``."""
        return predict_params(self.kind, params, x)[0]


def baseline_candidate() -> Candidate:
    """The mean-only baseline: predicts the training mean whatever the composition."""
    return Candidate("baseline:mean", BASELINE_KIND, ("other_species_wt_pct",), -1)


def candidates_for(property_name: str, published_methods: Sequence[str]) -> list[Candidate]:
    """All candidates for a property, in complexity order (published in registry order).

    Examples
    --------
    >>> [c.name for c in candidates_for("cfpp_C", ["ramos2009"])]  # doctest: +NORMALIZE_WHITESPACE
    ['published:ramos2009', 'recalibrated:ramos2009', 'pls:descriptors', 'pls:composition',
     'ridge:descriptors', 'ridge:composition', 'gp:descriptors']
    """
    out: list[Candidate] = []
    for rank, kind in enumerate(("published", "recalibrated")):
        for method in published_methods:
            feat = (estimate_feature(property_name, method),)
            out.append(Candidate(f"{kind}:{method}", kind, feat, rank, method))
    rank = 2
    for kind in ("pls", "ridge"):
        for set_name in _FEATURE_SET_ORDER:
            out.append(Candidate(f"{kind}:{set_name}", kind, FEATURE_SETS[set_name], rank))
            rank += 1
    out.append(Candidate("gp:descriptors", "gp", FEATURE_SETS["descriptors"], rank))
    return out


# ----------------------------------------------------------------- fitting
def _standardize(x: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Mean and scale as scikit-learn's StandardScaler (ddof 0; zero variance -> 1)."""
    mean = x.mean(axis=0)
    scale = x.std(axis=0)
    scale = np.where(scale < 10 * np.finfo(float).eps * np.maximum(np.abs(mean), 1.0), 1.0, scale)
    return mean, scale


def _fit_recalibrated(x: np.ndarray, y: np.ndarray) -> dict:
    """Least squares ``y = a + b * estimate``."""
    e = x[:, 0]
    e_mean, y_mean = e.mean(), y.mean()
    sxx = float(((e - e_mean) ** 2).sum())
    slope = float(((e - e_mean) * (y - y_mean)).sum() / sxx) if sxx > 0 else 0.0
    return {"intercept": float(y_mean - slope * e_mean), "slope": slope}


def _fit_ridge(x: np.ndarray, y: np.ndarray) -> dict:
    """Standardize, then RidgeCV (efficient leave-one-out over :data:`RIDGE_ALPHAS`)."""
    model = sklearn_estimator("ridge")
    model.fit(x, y)
    scaler, ridge = model[0], model[1]
    return {
        "x_mean": scaler.mean_.tolist(),
        "x_scale": scaler.scale_.tolist(),
        "coef": np.ravel(ridge.coef_).tolist(),
        "intercept": float(np.ravel(ridge.intercept_)[0]),
        "alpha": float(ridge.alpha_),
    }


def _fit_pls(x: np.ndarray, y: np.ndarray) -> dict:
    """PLSRegression; the affine map it learned is read back through ``predict``."""
    model = sklearn_estimator("pls", n_samples=len(y), n_features=x.shape[1])
    model.fit(x, y)
    mean, scale = _standardize(x)
    # The fitted predictor is affine in x: probe it at the mean and one scale step
    # along each feature (public API only; exact to rounding).
    probe = np.vstack([mean, mean + np.diag(scale)])
    p = np.ravel(model.predict(probe))
    return {
        "x_mean": mean.tolist(),
        "x_scale": scale.tolist(),
        "coef": (p[1:] - p[0]).tolist(),
        "intercept": float(p[0]),
        "n_components": int(model.n_components),
    }


def _fit_gp(x: np.ndarray, y: np.ndarray, *, seed: int) -> tuple[dict, list[str]]:
    """Standardized features and target, scikit-learn GaussianProcessRegressor.

    Beyond :data:`GP_TUNE_MAX` samples, see :func:`_fit_gp_large`.
    """
    if len(y) > GP_TUNE_MAX:
        return _fit_gp_large(x, y, seed=seed)
    model = sklearn_estimator("gp", seed=seed)
    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always")
        model.fit(x, y)
    notes = sorted({_short_warning(w.message) for w in caught})
    target = model.transformer_
    pipe = model.regressor_
    scaler, gpr = pipe[0], pipe[1]
    kernel = gpr.kernel_
    params = {
        "x_mean": scaler.mean_.tolist(),
        "x_scale": scaler.scale_.tolist(),
        "y_mean": float(np.ravel(target.mean_)[0]),
        "y_scale": float(np.ravel(target.scale_)[0]),
        "constant": float(kernel.k1.k1.constant_value),
        "length_scale": float(np.ravel(kernel.k1.k2.length_scale)[0]),
        "noise_level": float(kernel.k2.noise_level),
        "jitter": GP_JITTER,
        "x_train": np.asarray(gpr.X_train_, dtype=float).tolist(),
        "y_train": np.ravel(gpr.y_train_).astype(float).tolist(),
    }
    return params, notes


def _fit_gp_large(x: np.ndarray, y: np.ndarray, *, seed: int) -> tuple[dict, list[str]]:
    """Kernel tuned on a seeded :data:`GP_TUNE_MAX` subset, conditioned on :data:`GP_MAX_TRAIN`.

    Features and target are standardized on all samples (as the small-set path does);
    the conditioning subset starts with the tuning subset, so a set of at most
    :data:`GP_MAX_TRAIN` samples is conditioned on in full.
    """
    from sklearn.gaussian_process import GaussianProcessRegressor

    n = len(y)
    order = np.random.default_rng(seed).permutation(n)
    tune = np.sort(order[:GP_TUNE_MAX])
    keep = np.sort(order[:GP_MAX_TRAIN])
    x_mean, x_scale = _standardize(x)
    y_mean, y_scale = _standardize(y[:, None])
    z = (x - x_mean) / x_scale
    t = (y - y_mean[0]) / y_scale[0]
    gpr = GaussianProcessRegressor(
        kernel=_gp_kernel(), alpha=GP_JITTER, normalize_y=False, n_restarts_optimizer=0,
        random_state=seed,
    )
    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always")
        gpr.fit(z[tune], t[tune])
    notes = sorted({_short_warning(w.message) for w in caught})
    kernel = gpr.kernel_
    params = {
        "x_mean": x_mean.tolist(),
        "x_scale": x_scale.tolist(),
        "y_mean": float(y_mean[0]),
        "y_scale": float(y_scale[0]),
        "constant": float(kernel.k1.k1.constant_value),
        "length_scale": float(np.ravel(kernel.k1.k2.length_scale)[0]),
        "noise_level": float(kernel.k2.noise_level),
        "jitter": GP_JITTER,
        "x_train": z[keep].tolist(),
        "y_train": t[keep].tolist(),
    }
    return params, notes


def _gp_kernel():
    from sklearn.gaussian_process.kernels import RBF, ConstantKernel, WhiteKernel

    return ConstantKernel(1.0, (1e-2, 1e2)) * RBF(1.0, (1e-2, 1e3)) + WhiteKernel(
        0.1, (1e-6, 1e1)
    )


def _short_warning(message: Warning | str) -> str:
    text = str(message).strip().splitlines()[0]
    return text[:160]


def sklearn_estimator(kind: str, *, seed: int = 0, n_samples: int = 0, n_features: int = 0):
    """The scikit-learn estimator a kind fits (used by the fits and by the tests).

    ``ridge``: StandardScaler + RidgeCV; ``pls``: PLSRegression (scaled);
    ``gp``: target standardized around StandardScaler + GaussianProcessRegressor;
    ``recalibrated``: LinearRegression on the estimate column.
    """
    from sklearn.compose import TransformedTargetRegressor
    from sklearn.cross_decomposition import PLSRegression
    from sklearn.gaussian_process import GaussianProcessRegressor
    from sklearn.linear_model import LinearRegression, RidgeCV
    from sklearn.pipeline import make_pipeline
    from sklearn.preprocessing import StandardScaler

    if kind == "recalibrated":
        return LinearRegression()
    if kind == "ridge":
        return make_pipeline(StandardScaler(), RidgeCV(alphas=RIDGE_ALPHAS))
    if kind == "pls":
        k = PLS_COMPONENTS
        if n_samples and n_features:
            k = max(1, min(k, n_features, n_samples - 1))
        return PLSRegression(n_components=k, scale=True)
    if kind == "gp":
        gpr = GaussianProcessRegressor(
            kernel=_gp_kernel(), alpha=GP_JITTER, normalize_y=False, n_restarts_optimizer=0,
            random_state=seed,
        )
        return TransformedTargetRegressor(
            regressor=make_pipeline(StandardScaler(), gpr), transformer=StandardScaler()
        )
    raise ValueError(f"no scikit-learn estimator for kind {kind!r}")


# --------------------------------------------------------------- predicting
def predict_params(
    kind: str, params: Mapping, x: np.ndarray
) -> tuple[np.ndarray, np.ndarray | None]:
    """Evaluate fitted parameters on features with numpy alone.

    Returns ``(value, sd)``; ``sd`` is the predictive standard deviation of a
    Gaussian process (of a new measurement, noise included, before the
    cross-validated calibration of the model file) and None for the other kinds
    (their band is the cross-validated RMSE, see the model file).
    """
    x = np.asarray(x, dtype=float)
    if x.ndim != 2:
        raise ValueError("features must be a 2-D array")
    if kind == "published":
        return x[:, 0].copy(), None
    if kind == BASELINE_KIND:
        return np.full(x.shape[0], float(params["mean"])), None
    if kind == "recalibrated":
        return params["intercept"] + params["slope"] * x[:, 0], None
    if kind in ("ridge", "pls"):
        z = (x - np.asarray(params["x_mean"])) / np.asarray(params["x_scale"])
        return z @ np.asarray(params["coef"]) + params["intercept"], None
    if kind == "gp":
        with single_threaded_blas():
            return _predict_gp(params, x)
    raise ValueError(f"unknown candidate kind {kind!r}")


def _rbf(a: np.ndarray, b: np.ndarray, length_scale: float) -> np.ndarray:
    a = a / length_scale
    b = b / length_scale
    sq = (a * a).sum(axis=1)[:, None] + (b * b).sum(axis=1)[None, :] - 2.0 * a @ b.T
    return np.exp(-0.5 * np.maximum(sq, 0.0))


#: Gaussian-process prediction works on blocks of this many kernel entries (new
#: samples x training rows), so memory stays flat for any number of new samples.
GP_BLOCK_ENTRIES = 2_000_000


def _predict_gp(params: Mapping, x: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Gaussian-process mean and predictive standard deviation (noise included)."""
    from scipy.linalg import cho_solve, cholesky, solve_triangular

    xt = np.asarray(params["x_train"], dtype=float)
    yt = np.asarray(params["y_train"], dtype=float)
    c, ls, noise = params["constant"], params["length_scale"], params["noise_level"]
    k = c * _rbf(xt, xt, ls)
    k[np.diag_indices_from(k)] += noise + params["jitter"]
    chol = cholesky(k, lower=True, check_finite=False)
    alpha = cho_solve((chol, True), yt, check_finite=False)
    z = (x - np.asarray(params["x_mean"])) / np.asarray(params["x_scale"])
    mean = np.empty(len(z))
    var = np.empty(len(z))
    step = max(1, GP_BLOCK_ENTRIES // max(len(xt), 1))
    for start in range(0, len(z), step):
        block = slice(start, start + step)
        k_star = c * _rbf(z[block], xt, ls)
        mean[block] = k_star @ alpha
        v = solve_triangular(chol, k_star.T, lower=True, check_finite=False)
        var[block] = np.maximum(c + noise - np.einsum("ij,ij->j", v, v), 0.0)
    y_scale = params["y_scale"]
    return mean * y_scale + params["y_mean"], np.sqrt(var) * y_scale
