"""Helpers the tests share: where the shipped and test files are, and known signals."""

from __future__ import annotations

from pathlib import Path

import numpy as np

ROOT = Path(__file__).resolve().parent.parent
CASES = ROOT / "cases"
TEST_MACHINES = Path(__file__).resolve().parent / "machines"
TEST_DATA = Path(__file__).resolve().parent / "data"
SHARED_DATASETS = ROOT.parent / "shared" / "datasets"


def tone(freq_hz, fs, n, amplitude=1.0, phase=0.0):
    """A sine of ``amplitude`` (peak) at ``freq_hz``, ``n`` samples at ``fs``."""
    t = np.arange(n) / fs
    return amplitude * np.sin(2 * np.pi * freq_hz * t + phase)
