"""The small error hierarchy of fame-estimator.

Every error the user can cause derives from :class:`EstimatorError`; the CLI
reports it as one line on stderr and exits 1 (bad data) or 2 (bad usage).
Specific errors also inherit the matching built-in so callers of the Python
API can catch ``ValueError`` or ``KeyError`` as usual.
"""

from __future__ import annotations


class EstimatorError(Exception):
    """Base class for every error fame-estimator raises on purpose."""

    exit_code = 1


class ProfileError(ValueError, EstimatorError):
    """A composition is malformed: bad cell, bad sum, duplicate sample or species."""


class InputFileError(ValueError, EstimatorError):
    """An input file cannot be read: missing, empty, unknown format or layout."""


class UnknownSpeciesError(KeyError, EstimatorError):
    """A species name that the notation parser cannot map to a species key."""

    def __str__(self) -> str:  # KeyError would quote the message
        return str(self.args[0]) if self.args else ""


class UnknownNameError(KeyError, EstimatorError):
    """An unknown oil, method, specification or property name; lists the valid ones."""

    exit_code = 2

    def __str__(self) -> str:
        return str(self.args[0]) if self.args else ""


class UsageError(ValueError, EstimatorError):
    """Options that contradict each other or lie outside their range."""

    exit_code = 2


class ModelFileError(ValueError, EstimatorError):
    """A model file is malformed, tampered with, or for another property or version."""
