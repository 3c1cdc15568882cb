"""Refit on a lab's own samples: cross-validated against the published methods.

* :mod:`~estimator.refit.features`: named features (species, descriptors, published
  estimates) and the training domain;
* :mod:`~estimator.refit.candidates`: published as is, recalibrated, PLS, ridge and a
  Gaussian process, each fitted to plain parameters;
* :mod:`~estimator.refit.crossval`: the cross-validation scheme, the scores and the
  choice (:func:`fit_property`, :func:`fit_properties`);
* :mod:`~estimator.refit.model_file`: the JSON model file (never pickle).
"""

from __future__ import annotations

from estimator.refit.crossval import (
    CVResult,
    CVScheme,
    PropertyFit,
    cross_validate,
    cv_scheme,
    fit_properties,
    fit_property,
)
from estimator.refit.features import TrainingDomain, compute_features
from estimator.refit.model_file import (
    FittedModel,
    Prediction,
    file_provenance,
    load_models,
    save_models,
)

__all__ = [
    "CVResult",
    "CVScheme",
    "FittedModel",
    "Prediction",
    "PropertyFit",
    "TrainingDomain",
    "compute_features",
    "cross_validate",
    "cv_scheme",
    "file_provenance",
    "fit_properties",
    "fit_property",
    "load_models",
    "save_models",
]
