"""Where a steady history turned into a rising one: a one-sided CUSUM on the log of the values.

Page's cumulative sum (Page 1954, "Continuous inspection schemes",
Biometrika 41) accumulates standardised excursions above the baseline,
less an allowance k, and signals when the sum passes h; the onset is the
last reading at which the sum was still zero. Logs make the test scale-free
(vibration grows by factors, and its scatter grows with it). k = 0.5 and
h = 5 standard deviations are the usual textbook choice (common practice).
The scatter of a short baseline is floored at a repeatability of 10 % of the
level (an assumption: route readings rarely repeat better).
"""

from __future__ import annotations

import numpy as np

CUSUM_K = 0.5
CUSUM_H = 5.0
MIN_LOG_SCATTER = np.log(1.10)


def cusum_onset(values: np.ndarray, baseline_n: int, k: float = CUSUM_K, h: float = CUSUM_H) -> int | None:
    """Index of the first reading of the rising stage, or None if the CUSUM never signals."""
    x = np.log(np.maximum(np.asarray(values, dtype=float), 1e-12))
    base = x[:baseline_n]
    mu = float(np.median(base))
    sigma = max(float(np.std(base, ddof=1)) if len(base) > 2 else 0.0, MIN_LOG_SCATTER)
    s, last_zero = 0.0, 0
    for i, xi in enumerate(x):
        s = max(0.0, s + (xi - mu) / sigma - k)
        if s == 0.0:
            last_zero = i
        elif s > h:
            return min(last_zero + 1, i)
    return None
