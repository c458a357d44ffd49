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

    Parameters
    ----------
    x : array_like
        Samples, any unit.
    fs : float
        Sample rate in Hz.
    band_hz : tuple of float, optional
        (low, high) in Hz; None keeps the whole band at the full rate.
    min_rate_hz : float
        Lowest sample rate of the result, Hz.

    Returns
    -------
    BandSignal
        Complex baseband samples (|samples| is the envelope in the unit of
        ``x``), their sample rate in Hz and the band.

    References
    ----------
    Randall & Antoni (2011), "Rolling element bearing diagnostics - A tutorial",
    MSSP 25(2), section 3 (band-pass, analytic signal, envelope); with no band
    the same as ``scipy.signal.hilbert``.

    Examples
    --------
    >>> fs = 1000.0; t = np.arange(1000) / fs
    >>> x = (1 + 0.5 * np.cos(2 * np.pi * 10 * t)) * np.cos(2 * np.pi * 200 * t)
    >>> env = np.abs(analytic_band(x, fs, (150.0, 250.0)).samples)
    >>> round(float(env.max()), 6), round(float(env.mean()), 6)    # 1 + 0.5 cos: peak 1.5, mean 1
    (1.5, 1.0)
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
    """Frequencies (Hz) of the ``n_lines`` lines of an ``n``-point one-sided FFT.

    Parameters
    ----------
    n_lines : int
        Number of lines wanted.
    n : int
        Record length in samples.
    fs : float
        Sample rate in Hz.

    Returns
    -------
    numpy.ndarray
        k fs / n for k = 0 .. n_lines - 1, in Hz.

    References
    ----------
    Brigham (1988), "The Fast Fourier Transform and its Applications", the DFT's
    line spacing fs / N.

    Examples
    --------
    >>> line_frequencies(4, 8, 100.0).tolist()
    [0.0, 12.5, 25.0, 37.5]
    """
    return np.arange(n_lines) * fs / n


def band_lines(freq_hz: np.ndarray, band_hz: tuple[float, float]) -> tuple[int, int]:
    """First and one-past-last index of the lines in [lo, hi] Hz, DC excluded.

    Parameters
    ----------
    freq_hz : numpy.ndarray
        Line frequencies in Hz, ascending.
    band_hz : tuple of float
        (low, high) in Hz.

    Returns
    -------
    tuple of int
        (first, stop) line indices, ``stop`` not included.

    References
    ----------
    Randall & Antoni (2011), section 3.1: the ideal band-pass keeps the lines of the band.

    Examples
    --------
    >>> band_lines(line_frequencies(9, 16, 16.0), (2.0, 5.0))
    (2, 6)
    """
    first = max(1, int(np.searchsorted(freq_hz, band_hz[0], side="left")))
    stop = int(np.searchsorted(freq_hz, band_hz[1], side="right"))
    return first, max(first, stop)


def band_length(width_lines: int, n: int, fs: float, min_rate_hz: float = 0.0) -> int:
    """Samples of a band signal of ``width_lines`` lines: at least twice its bandwidth and ``min_rate_hz``.

    Parameters
    ----------
    width_lines : int
        Lines in the band.
    n : int
        Record length in samples.
    fs : float
        Sample rate of the record in Hz.
    min_rate_hz : float
        Lowest sample rate of the band signal, Hz.

    Returns
    -------
    int
        A fast FFT length (``scipy.fft.next_fast_len``), at most ``n``.

    References
    ----------
    Randall & Antoni (2011), section 3.1 (the squared envelope of a band B wide
    needs a rate of 2B).

    Examples
    --------
    >>> band_length(100, 65536, 25600.0), band_length(100, 65536, 25600.0, min_rate_hz=2000.0)
    (210, 5120)
    """
    m = sfft.next_fast_len(max(2 * width_lines + 2, int(np.ceil(min_rate_hz * n / fs)), 16))
    return min(m, n)


def band_from_spectrum(spec: np.ndarray, n: int, fs: float, band_hz: tuple[float, float],
                       min_rate_hz: float = 0.0, exact_rate_hz: float | None = None) -> BandSignal:
    """``analytic_band`` from a record's one-sided FFT ``spec`` (of ``n`` samples), computed once.

    ``exact_rate_hz`` sets the band signal's sample rate (at least the
    bandwidth, which a complex band signal needs) instead of the default.

    Parameters
    ----------
    spec : numpy.ndarray
        One-sided FFT of the record (complex).
    n : int
        Record length in samples.
    fs : float
        Sample rate in Hz.
    band_hz : tuple of float
        (low, high) in Hz.
    min_rate_hz : float
        Lowest sample rate of the result, Hz.
    exact_rate_hz : float, optional
        The sample rate wanted, Hz.

    Returns
    -------
    BandSignal
        As ``analytic_band``.

    References
    ----------
    Randall & Antoni (2011), section 3.

    Examples
    --------
    >>> fs = 1000.0; t = np.arange(1000) / fs
    >>> x = 2.0 * np.cos(2 * np.pi * 200 * t)
    >>> b = band_from_spectrum(np.fft.rfft(x), len(x), fs, (150.0, 250.0))
    >>> round(float(np.abs(b.samples).mean()), 6), b.fs_hz
    (2.0, 210.0)
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
    """The rising and falling edges of a symmetric Tukey window of length ``n`` (it is 1 between them).

    Parameters
    ----------
    n : int
        Window length in samples.
    alpha : float
        Fraction of the window inside the tapers (0 < alpha < 1).

    Returns
    -------
    rise, fall : numpy.ndarray
        The tapered samples at the start and at the end (dimensionless).

    References
    ----------
    Harris (1978), "On the use of windows for harmonic analysis with the discrete
    Fourier transform", Proc. IEEE 66(1) (the tapered cosine window);
    ``scipy.signal.windows.tukey`` as reference in the tests.

    Examples
    --------
    >>> rise, fall = tukey_edges(11, 0.4)
    >>> np.round(rise, 3).tolist(), np.round(fall, 3).tolist()
    ([0.0, 0.5, 1.0], [1.0, 0.5, 0.0])
    """
    width = int(np.floor(alpha * (n - 1) / 2.0))
    head = np.arange(width + 1, dtype=float)
    tail = np.arange(n - width - 1, n, dtype=float)
    rise = 0.5 * (1 + np.cos(np.pi * (-1 + 2.0 * head / alpha / (n - 1))))
    fall = 0.5 * (1 + np.cos(np.pi * (-2.0 / alpha + 1 + 2.0 * tail / alpha / (n - 1))))
    return rise, fall


def tukey(n: int, alpha: float) -> np.ndarray:
    """Symmetric Tukey (tapered cosine) window, as ``scipy.signal.windows.tukey(n, alpha)``.

    Parameters
    ----------
    n : int
        Length in samples.
    alpha : float
        Fraction of the window inside the tapers (0: rectangular, 1: Hann).

    Returns
    -------
    numpy.ndarray
        The window (dimensionless).

    References
    ----------
    Harris (1978), Proc. IEEE 66(1); ``scipy.signal.windows.tukey``.

    Examples
    --------
    >>> np.round(tukey(11, 0.4), 3).tolist()
    [0.0, 0.5, 1.0, 1.0, 1.0, 1.0, 1.0, 1.0, 1.0, 0.5, 0.0]
    """
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

    Parameters
    ----------
    x : array_like
        Samples, any unit.

    Returns
    -------
    numpy.ndarray
        Complex lines of unit magnitude (DC zero), dimensionless.

    References
    ----------
    Sawalhi & Randall (2011); Borghesani et al. (2013), "Application of cepstrum
    pre-whitening for the diagnosis of bearing faults under variable speed
    conditions", MSSP 36.

    Examples
    --------
    >>> w = whitened_spectrum(np.random.default_rng(0).standard_normal(256))
    >>> float(abs(w[0])), round(float(np.abs(w[1:]).min()), 12), round(float(np.abs(w[1:]).max()), 12)
    (0.0, 1.0, 1.0)
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
    bearing signal dominant. The result has no physical unit. Both ends are
    tapered first (a Tukey window over 1 % of the record): otherwise the jump
    between the last and the first sample, which the FFT treats as adjacent,
    whitens into a spike.

    Parameters
    ----------
    x : array_like
        Samples, any unit.

    Returns
    -------
    numpy.ndarray
        The prewhitened record, same length, dimensionless.

    References
    ----------
    Sawalhi & Randall (2011); Borghesani, Pennacchi, Randall, Sawalhi & Ricci
    (2013), "Application of cepstrum pre-whitening for the diagnosis of bearing
    faults under variable speed conditions", MSSP 36.

    Examples
    --------
    >>> y = cepstral_prewhiten(np.random.default_rng(1).standard_normal(512))
    >>> spectrum = np.abs(np.fft.rfft(y))[1:-1]
    >>> round(float(spectrum.min()), 9), round(float(spectrum.max()), 9)
    (1.0, 1.0)
    """
    x = np.asarray(x, dtype=float)
    return sfft.irfft(whitened_spectrum(x), len(x))


def squared_envelope_spectrum(x, fs: float, band_hz: tuple[float, float] | None = None,
                              max_freq_hz: float | None = None, window_kind: str = "hann") -> Spectrum:
    """Squared envelope spectrum of ``x`` in ``band_hz``, peak-scaled.

    For x = (1 + m cos 2 pi fm t) cos 2 pi fc t the squared envelope is
    1 + m^2/2 + 2m cos 2 pi fm t + (m^2/2) cos 4 pi fm t, so the SES reads 2m
    at fm and m^2/2 at 2 fm. Amplitudes are in the input's unit squared.

    Parameters
    ----------
    x : array_like
        Samples, any unit.
    fs : float
        Sample rate in Hz.
    band_hz : tuple of float, optional
        Demodulation band (low, high) in Hz; None: the whole band.
    max_freq_hz : float, optional
        Highest frequency kept in the SES, Hz.
    window_kind : str
        Window of the SES (hann).

    Returns
    -------
    Spectrum
        The SES, in the unit of ``x`` squared (peak).

    References
    ----------
    Randall & Antoni (2011), "Rolling element bearing diagnostics - A tutorial",
    MSSP 25(2), section 3.

    Examples
    --------
    >>> fs = 2000.0; t = np.arange(4000) / fs
    >>> x = (1 + 0.5 * np.cos(2 * np.pi * 10 * t)) * np.cos(2 * np.pi * 400 * t)
    >>> s = squared_envelope_spectrum(x, fs, (300.0, 500.0), max_freq_hz=50.0)
    >>> [round(float(s.amplitude[s.freq_hz == f][0]), 6) for f in (10.0, 20.0)]   # 2m and m^2/2
    [1.0, 0.125]
    """
    band = analytic_band(x, fs, band_hz, min_rate_hz=2.0 * (max_freq_hz or 0.0))
    squared = np.abs(band.samples) ** 2
    spec = amplitude_spectrum(squared, band.fs_hz, window_kind=window_kind, scaling="peak")
    if max_freq_hz is not None:
        spec = spec.below(max_freq_hz)
    return spec
