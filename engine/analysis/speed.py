"""Running-speed refinement: the true 1X near the nominal speed, from its harmonics.

An induction motor's speed moves with load (slip), and a tach may be absent.
The search scores every candidate speed within ``search_fraction`` of the
nominal by how far its first harmonics stand above the local noise floor (a
harmonic comb), then refines the winner from the interpolated frequencies
of the harmonics it found, weighting higher harmonics more because they
resolve speed more finely (common practice in order tracking).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from .peaks import noise_floor, peak_near
from .spectrum import Spectrum

MIN_HARMONIC_SNR = 3.0


@dataclass(frozen=True)
class SpeedEstimate:
    speed_hz: float
    nominal_hz: float
    harmonics_found: tuple[int, ...]   # which orders stood above the floor
    refined: bool                      # False: no harmonic found, nominal kept

    @property
    def speed_rpm(self) -> float:
        return self.speed_hz * 60.0


def refine_running_speed(spec: Spectrum, nominal_hz: float, search_fraction: float = 0.05,
                         harmonics: int = 5, exclude_hz=()) -> SpeedEstimate:
    """Find the shaft speed near ``nominal_hz`` whose harmonics best explain the spectrum.

    Harmonic k counts with weight 1/k, so 1X leads. A harmonic whose search
    range holds one of ``exclude_hz`` (line-frequency harmonics of a motor,
    which a slipping rotor's harmonics cross) is left out, since it would pull
    the speed towards the line.
    """
    amp = spec.amplitude
    df = spec.resolution_hz
    orders = np.arange(1, harmonics + 1)
    orders = orders[orders * nominal_hz * (1 + search_fraction) < spec.fmax_hz]
    excluded = np.asarray(exclude_hz, dtype=float)
    if excluded.size:
        reach = orders[:, None] * nominal_hz * search_fraction + 2 * df
        clash = np.any(np.abs(orders[:, None] * nominal_hz - excluded[None, :]) <= reach, axis=1)
        orders = orders[~clash | (orders == 1)]
    if len(orders) == 0:
        return SpeedEstimate(nominal_hz, nominal_hz, (), False)
    floors = {k: max(noise_floor(spec, int(round(k * nominal_hz / df)), half_width=50), 1e-300)
              for k in orders}
    step = df / (4 * orders[-1])
    candidates = np.arange(nominal_hz * (1 - search_fraction), nominal_hz * (1 + search_fraction) + step, step)
    score = np.zeros(len(candidates))
    for k in orders:
        lines = np.clip(np.rint(k * candidates / df).astype(int), 1, len(amp) - 2)
        local = np.maximum(np.maximum(amp[lines - 1], amp[lines]), amp[lines + 1])
        score += np.log1p(local / floors[k]) / k
    best = float(candidates[np.argmax(score)])
    estimates, weights, found = [], [], []
    for k in orders:
        peak = peak_near(spec, k * best, tolerance_hz=1.5 * df)
        if peak is None or peak.amplitude / floors[k] < MIN_HARMONIC_SNR:
            continue
        estimates.append(peak.freq_hz / k)
        weights.append(k * k * min(peak.amplitude / floors[k], 100.0))
        found.append(int(k))
    if not found:
        return SpeedEstimate(nominal_hz, nominal_hz, (), False)
    return SpeedEstimate(float(np.average(estimates, weights=weights)), nominal_hz, tuple(found), True)
