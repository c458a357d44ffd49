"""Shared fixtures: paths to the shipped machines, a seeded generator, signal helpers."""

from __future__ import annotations

from pathlib import Path

import numpy as np
import pytest

ROOT = Path(__file__).resolve().parent.parent
CASES = ROOT / "cases"
TEST_MACHINES = Path(__file__).resolve().parent / "machines"
SHARED_DATASETS = ROOT.parent / "shared" / "datasets"


@pytest.fixture
def rng():
    return np.random.default_rng(20261202)


def tone(freq_hz, fs, n, amplitude=1.0, phase=0.0):
    t = np.arange(n) / fs
    return amplitude * np.sin(2 * np.pi * freq_hz * t + phase)
