"""Shared fixtures: a seeded generator. Paths and signal helpers are in support.py."""

from __future__ import annotations

import numpy as np
import pytest


@pytest.fixture
def rng():
    return np.random.default_rng(20261202)
