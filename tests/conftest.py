"""Test-session settings shared by every test module."""

from __future__ import annotations

import pytest


@pytest.fixture(autouse=True)
def _one_process_unless_a_test_asks(monkeypatch):
    """Run refits and figures in this process; tests of forked workers set their own count.

    Forked workers are tested in ``tests/test_parallel.py``; elsewhere one process keeps
    the many report and fit tests independent of what earlier tests left running.
    """
    monkeypatch.setenv("FAME_ESTIMATOR_WORKERS", "1")
