"""A compact spectrum of each channel, small enough to keep for every reading in the history.

A trend of spectra (a waterfall of one point's surveys, two surveys overlaid)
needs each reading's spectrum, not only its indicators. The velocity spectrum
of a channel is cut at the highest frequency the machine's forcing
frequencies make worth seeing and reduced to at most ``MAX_LINES`` lines by
keeping the largest line of each group of adjacent lines: a tone's amplitude
survives the reduction (its frequency is known to within one group), where an
average would spread it over the group. The analysis hands these over with the
forcing frequencies of the reading, as plain data.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from .result import Analysis

MAX_LINES = 1600           # lines kept per channel: 6.4 kB as float32
ORDERS_SHOWN = 12          # at least 12 x the fastest shaft's speed
FORCING_MARGIN = 1.3       # and 30 % above the highest forcing frequency
SKIPPED = {"slip", "pole pass", "HTF"}     # spacings and beat rates, not lines of the spectrum


@dataclass(frozen=True)
class CompactSpectrum:
    """One channel's spectrum reduced by peaks: line ``i`` holds the largest amplitude of the original
    lines from ``i * step_hz`` to ``(i + 1) * step_hz`` (exclusive), in ``unit``."""

    channel: str
    point: str
    shaft: str | None            # the shaft under the point
    at: str | None               # the bearing (or shaft) the point sits at
    quantity: str                # velocity
    unit: str                    # mm/s RMS
    step_hz: float               # width of one kept line
    resolution_hz: float         # line spacing of the spectrum it was reduced from
    amplitude: np.ndarray        # float32

    def frequencies_hz(self) -> np.ndarray:
        """The centre of each kept line's group, Hz."""
        return (np.arange(len(self.amplitude)) + 0.5) * self.step_hz - 0.5 * self.resolution_hz


@dataclass(frozen=True)
class CompactForcing:
    """A forcing frequency of the reading, named as the analysis names it."""

    name: str                    # 1X, 2X, BPFO, GMF, ...
    component: str
    family: str
    shaft: str
    frequency_hz: float


def peak_reduce(amplitude: np.ndarray, resolution_hz: float, max_lines: int = MAX_LINES) -> tuple[np.ndarray, float]:
    """Reduce a spectrum to at most ``max_lines`` lines, each the largest of a group of adjacent lines.

    Parameters
    ----------
    amplitude : numpy.ndarray
        Amplitudes of a one-sided spectrum from 0 Hz, line spacing ``resolution_hz`` (any unit).
    resolution_hz : float
        Line spacing of the spectrum, Hz.
    max_lines : int
        The most lines to keep.

    Returns
    -------
    tuple of (numpy.ndarray, float)
        The kept lines (float32, the input's unit) and their spacing in Hz: ``resolution_hz`` times the
        group size, the smallest whole number of lines that leaves at most ``max_lines`` groups.

    References
    ----------
    Peak-hold decimation of a spectrum for display, as the drawing of long traces by the largest value of
    each column (common practice): a tone's amplitude is kept, its frequency is known to one group.

    Examples
    --------
    >>> a = np.zeros(4000); a[1234] = 2.5
    >>> kept, step = peak_reduce(a, 0.25, 1600)
    >>> len(kept), step, float(kept.max()), int(kept.argmax())
    (1334, 0.75, 2.5, 411)
    """
    a = np.asarray(amplitude, dtype=float)
    if max_lines < 1:
        raise ValueError("max_lines must be at least 1")
    group = max(1, math.ceil(len(a) / max_lines))
    if group == 1:
        return a.astype(np.float32), float(resolution_hz)
    starts = np.arange(0, len(a), group)
    return np.maximum.reduceat(a, starts).astype(np.float32), float(resolution_hz) * group


def compact_spectra(analysis: Analysis, max_lines: int = MAX_LINES) -> tuple[tuple[CompactSpectrum, ...],
                                                                           tuple[CompactForcing, ...]]:
    """Every channel's velocity spectrum (mm/s RMS) reduced by peaks, and the reading's forcing frequencies.

    Parameters
    ----------
    analysis : Analysis
        The analysis of one reading (``analyse``).
    max_lines : int
        The most lines kept per channel.

    Returns
    -------
    tuple
        (one ``CompactSpectrum`` per channel, the ``CompactForcing`` of every forcing frequency of the
        reading). Each spectrum stops at the larger of 12 orders of the fastest shaft and 1.3 times the
        highest forcing frequency, or at its own last line.

    References
    ----------
    The spectrum is the analysis's Hann velocity spectrum (Heinzel et al. 2002); reduction by
    ``peak_reduce``.

    Examples
    --------
    >>> from engine.common.paths import CASES
    >>> from engine.machine import load_machine
    >>> from engine.simulation import as_reading, simulate
    >>> from engine.analysis import analyse
    >>> machine = load_machine(CASES / "machines" / "rw2-raw-water-pump.yaml")   # the demo pump, 1486 r/min
    >>> reading = as_reading(simulate(machine, "unbalance", None, 2, None, 5120.0, 4.0, 1, ["P1H"]))
    >>> spectra, forcing = compact_spectra(analyse(reading, machine))
    >>> spectra[0].point, spectra[0].unit, len(spectra[0].amplitude) <= 1600, any(f.name == "1X" for f in forcing)
    ('P1H', 'mm/s RMS', True, True)
    """
    fastest = max(analysis.speeds_hz.values(), default=0.0)
    highest = max((f.frequency_hz for f in analysis.forcing if f.name not in SKIPPED), default=0.0)
    f_hi = max(ORDERS_SHOWN * fastest, FORCING_MARGIN * highest)
    spectra = []
    for c in analysis.channels:
        v = c.velocity.below(f_hi) if f_hi > 0 else c.velocity
        kept, step = peak_reduce(v.amplitude, v.resolution_hz, max_lines)
        spectra.append(CompactSpectrum(c.name, c.point.id if c.point else (c.channel.point or ""),
                                       c.point.shaft if c.point else None, c.point.at if c.point else None, "velocity",
                                       "mm/s RMS", step, float(v.resolution_hz), kept))
    forcing = tuple(CompactForcing(f.name, f.component, f.family, f.shaft, float(f.frequency_hz))
                    for f in sorted(analysis.forcing, key=lambda f: (f.frequency_hz, f.name, f.component))
                    if f.name not in SKIPPED)
    return tuple(spectra), forcing
