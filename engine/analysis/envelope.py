"""Envelope analysis: band-limited analytic signal and squared envelope spectrum.

Following Randall & Antoni (2011), "Rolling element bearing diagnostics - A
tutorial", MSSP 25, section 3: the signal is band-pass filtered around the
resonance that bearing impacts excite (chosen by the kurtogram), made
analytic, and the spectrum of its squared magnitude (the squared envelope
spectrum, SES) shows the impact repetition rate and its harmonics.

The band-pass is ideal and done in the frequency domain: the lines of the
band are kept, the rest zeroed, negative frequencies dropped (which makes the
signal analytic, as ``scipy.signal.hilbert`` does) and the band shifted to
baseband, so the squared envelope is computed at a reduced rate. The
squared envelope does not change under that frequency shift.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from scipy import fft as sfft
from scipy import signal

from .spectrum import Spectrum, amplitude_spectrum


@dataclass(frozen=True)
class BandSignal:
    """A complex, baseband-shifted analytic signal of one band of ``x``."""

    samples: np.ndarray   # complex; |samples| is the envelope in the input's unit
    fs_hz: float          # its (reduced) sample rate
    band_hz: tuple[float, float]


def analytic_band(x, fs: float, band_hz: tuple[float, float] | None = None,
                  min_rate_hz: float = 0.0) -> BandSignal:
    """Analytic signal of the part of ``x`` in ``band_hz`` (all of it when None).

    The result's sample rate is at least twice the bandwidth (so that the
    squared envelope is not aliased) and at least ``min_rate_hz``.
    """
    x = np.asarray(x, dtype=float)
    n = len(x)
    spec = np.fft.rfft(x - x.mean())
    if band_hz is None:
        # the whole band, kept at full rate: the same as scipy.signal.hilbert
        full = np.zeros(n, dtype=complex)
        full[1:len(spec)] = 2.0 * spec[1:]
        if n % 2 == 0:
            full[n // 2] = spec[n // 2]  # the Nyquist line has no negative twin
        return BandSignal(np.fft.ifft(full), fs, (0.0, fs / 2))
    return band_from_spectrum(spec, n, fs, band_hz, min_rate_hz)


def band_from_spectrum(spec: np.ndarray, n: int, fs: float, band_hz: tuple[float, float],
                       min_rate_hz: float = 0.0) -> BandSignal:
    """``analytic_band`` from a record's one-sided FFT ``spec`` (of ``n`` samples), computed once."""
    lo, hi = band_hz
    f = np.arange(len(spec)) * fs / n
    lines = np.flatnonzero((f >= lo) & (f <= hi) & (f > 0))
    width = len(lines)
    m = sfft.next_fast_len(max(2 * width + 2, int(np.ceil(min_rate_hz * n / fs)), 16))
    m = min(m, n)
    base = np.zeros(m, dtype=complex)
    base[:width] = 2.0 * spec[lines]
    return BandSignal(np.fft.ifft(base) * (m / n), fs * m / n, (float(lo), float(hi)))


def cepstral_prewhiten(x) -> np.ndarray:
    """Flatten the spectrum's magnitude, keeping its phase: X / |X|.

    Removes discrete components (shaft and mesh harmonics) and the shape of
    the transfer path in one step, which leaves the impulsive part of a
    bearing signal dominant (Sawalhi & Randall 2011; Borghesani, Pennacchi,
    Randall, Sawalhi & Ricci 2013, "Application of cepstrum pre-whitening for
    the diagnosis of bearing faults under variable speed conditions", MSSP 36).
    The result has no physical unit. Both ends are tapered first (a Tukey
    window over 1 % of the record): otherwise the jump between the last and
    the first sample, which the FFT treats as adjacent, whitens into a spike.
    """
    x = np.asarray(x, dtype=float)
    taper = signal.windows.tukey(len(x), alpha=0.02)
    spec = np.fft.rfft((x - x.mean()) * taper)
    mag = np.abs(spec)
    floor = 1e-12 * (mag.max() if mag.max() > 0 else 1.0)
    return np.fft.irfft(spec / np.maximum(mag, floor), len(x))


def squared_envelope_spectrum(x, fs: float, band_hz: tuple[float, float] | None = None,
                              max_freq_hz: float | None = None, window_kind: str = "hann") -> Spectrum:
    """Squared envelope spectrum of ``x`` in ``band_hz``, peak-scaled.

    For x = (1 + m cos 2 pi fm t) cos 2 pi fc t the squared envelope is
    1 + m^2/2 + 2m cos 2 pi fm t + (m^2/2) cos 4 pi fm t, so the SES reads 2m
    at fm and m^2/2 at 2 fm. Amplitudes are in the input's unit squared.
    """
    band = analytic_band(x, fs, band_hz, min_rate_hz=2.0 * (max_freq_hz or 0.0))
    squared = np.abs(band.samples) ** 2
    spec = amplitude_spectrum(squared, band.fs_hz, window_kind=window_kind, scaling="peak")
    if max_freq_hz is not None:
        keep = spec.freq_hz <= max_freq_hz
        spec = Spectrum(spec.freq_hz[keep], spec.amplitude[keep], spec.scaling, spec.window,
                        spec.resolution_hz, spec.enbw_hz, spec.averages)
    return spec
