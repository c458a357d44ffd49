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
from . import _fft as sfft

from .spectrum import Spectrum, amplitude_spectrum

PREWHITEN_TAPER = 0.02    # Tukey taper fraction before whitening (1 % of the record at each end)


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
    spec = sfft.rfft(x - x.mean())
    if band_hz is None:
        # the whole band, kept at full rate: the same as scipy.signal.hilbert
        full = np.zeros(n, dtype=complex)
        full[1:len(spec)] = 2.0 * spec[1:]
        if n % 2 == 0:
            full[n // 2] = spec[n // 2]  # the Nyquist line has no negative twin
        return BandSignal(sfft.ifft(full), fs, (0.0, fs / 2))
    return band_from_spectrum(spec, n, fs, band_hz, min_rate_hz)


def line_frequencies(n_lines: int, n: int, fs: float) -> np.ndarray:
    """Frequencies (Hz) of the ``n_lines`` lines of an ``n``-point one-sided FFT."""
    return np.arange(n_lines) * fs / n


def band_lines(freq_hz: np.ndarray, band_hz: tuple[float, float]) -> tuple[int, int]:
    """First and one-past-last index of the lines in [lo, hi] Hz, DC excluded."""
    first = max(1, int(np.searchsorted(freq_hz, band_hz[0], side="left")))
    stop = int(np.searchsorted(freq_hz, band_hz[1], side="right"))
    return first, max(first, stop)


def band_length(width_lines: int, n: int, fs: float, min_rate_hz: float = 0.0) -> int:
    """Samples of a band signal of ``width_lines`` lines: at least twice its bandwidth and ``min_rate_hz``."""
    m = sfft.next_fast_len(max(2 * width_lines + 2, int(np.ceil(min_rate_hz * n / fs)), 16))
    return min(m, n)


def band_from_spectrum(spec: np.ndarray, n: int, fs: float, band_hz: tuple[float, float],
                       min_rate_hz: float = 0.0, exact_rate_hz: float | None = None) -> BandSignal:
    """``analytic_band`` from a record's one-sided FFT ``spec`` (of ``n`` samples), computed once.

    ``exact_rate_hz`` sets the band signal's sample rate (at least the
    bandwidth, which a complex band signal needs) instead of the default.
    """
    first, stop = band_lines(line_frequencies(len(spec), n, fs), band_hz)
    width = stop - first
    if exact_rate_hz is None:
        m = band_length(width, n, fs, min_rate_hz)
    else:
        m = min(n, sfft.next_fast_len(max(width + 2, int(np.ceil(exact_rate_hz * n / fs)), 16)))
    base = np.zeros(m, dtype=complex)
    np.multiply(spec[first:stop], 2.0 * m / n, out=base[:width])
    return BandSignal(sfft.ifft(base, overwrite_x=True), fs * m / n, (float(band_hz[0]), float(band_hz[1])))


def tukey_edges(n: int, alpha: float) -> tuple[np.ndarray, np.ndarray]:
    """The rising and falling edges of a symmetric Tukey window of length ``n`` (it is 1 between them)."""
    width = int(np.floor(alpha * (n - 1) / 2.0))
    head = np.arange(width + 1, dtype=float)
    tail = np.arange(n - width - 1, n, dtype=float)
    rise = 0.5 * (1 + np.cos(np.pi * (-1 + 2.0 * head / alpha / (n - 1))))
    fall = 0.5 * (1 + np.cos(np.pi * (-2.0 / alpha + 1 + 2.0 * tail / alpha / (n - 1))))
    return rise, fall


def tukey(n: int, alpha: float) -> np.ndarray:
    """Symmetric Tukey (tapered cosine) window, as ``scipy.signal.windows.tukey(n, alpha)``."""
    if n <= 1 or alpha <= 0:
        return np.ones(n)
    if alpha >= 1:
        return 0.5 - 0.5 * np.cos(2 * np.pi * np.arange(n) / (n - 1))
    rise, fall = tukey_edges(n, alpha)
    w = np.ones(n)
    w[:len(rise)] = rise
    w[n - len(fall):] = fall
    return w


def whitened_spectrum(x) -> np.ndarray:
    """One-sided FFT of the cepstrum-prewhitened record: X / |X| after a Tukey taper.

    It equals ``rfft(cepstral_prewhiten(x) - mean)`` (the DC line is zero and
    the Nyquist line real), so the kurtogram and the envelope views start
    from it without going back to the time domain and forward again.
    """
    x = np.asarray(x, dtype=float)
    tapered = x - x.mean()
    n = len(x)
    if n > 1:
        rise, fall = tukey_edges(n, PREWHITEN_TAPER)          # the window is 1 between its edges
        tapered[:len(rise)] *= rise
        tapered[n - len(fall):] *= fall
    white = sfft.rfft(tapered)
    del tapered
    mag = np.abs(white)
    top = mag.max()
    np.maximum(mag, 1e-12 * (top if top > 0 else 1.0), out=mag)
    white /= mag
    white[0] = 0.0
    if len(x) % 2 == 0:
        white[-1] = white[-1].real
    return white


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
    return sfft.irfft(whitened_spectrum(x), len(x))


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
        spec = spec.below(max_freq_hz)
    return spec
