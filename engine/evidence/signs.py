"""Signs: the observations a fact is made of, named so that facts which see the same one agree.

A fact may carry ``signs``: a mapping from a sign's name to how well the
fact's source explains it (a fit in (0, 1]). Two facts that rest on the same
spectral line, the same envelope line or the same waveform name the same
sign, whatever they measure about it; the reasoning shares each sign among
the hypotheses that explain it (``engine.reasoning.explaining``), so that a
sign already explained by a stronger cause stops supporting a weaker one.

Names: ``CHANNEL|spectrum|LINE`` (a line of the channel's spectrum, by its
index: the acceleration and velocity spectra share one grid),
``CHANNEL|envelope:VIEW|LINE`` (a line of one squared envelope spectrum),
``CHANNEL|waveform`` (the waveform's impulsiveness: kurtosis and crest
factor), ``CHANNEL|impacts`` (the impact train found in its envelope),
``CHANNEL|impacts:waveform`` (the impact train of its waveform before the
synchronous parts are taken out) and ``CHANNEL|turns:SHAFT`` (the waveform
cut into turns of a shaft).
"""

from __future__ import annotations

SIGNS = "signs"


def spectrum_line(channel: str, line: int) -> str:
    """The sign of one line of a channel's spectrum, by its index."""
    return f"{channel}|spectrum|{int(line)}"


def envelope_line(channel: str, view: str, line: int) -> str:
    """The sign of one line of a channel's envelope spectrum ``view``, by its index."""
    return f"{channel}|envelope:{view}|{int(line)}"


def waveform(channel: str) -> str:
    """The sign of a channel's waveform as a whole (its kurtosis and crest factor)."""
    return f"{channel}|waveform"


def impacts(channel: str) -> str:
    """The sign of a channel's impact train."""
    return f"{channel}|impacts"


def waveform_impacts(channel: str) -> str:
    """The sign of the impact train of a channel's waveform with its synchronous parts kept."""
    return f"{channel}|impacts:waveform"


def turns(channel: str, shaft: str) -> str:
    """The sign of a channel's once-per-turn content of one shaft."""
    return f"{channel}|turns:{shaft}"


def match_fit(error: float, tolerance: float) -> float:
    """How well a line ``error`` (relative) from its expected place fits, for a search ``tolerance`` wide:
    1 when exact, 1/2 at the tolerance's edge (a Lorentzian: a line anywhere within the tolerance is
    still a fair match, which is what the tolerance says)."""
    if tolerance <= 0:
        return 1.0
    return round(1.0 / (1.0 + (abs(float(error)) / tolerance) ** 2), 4)


def merged(*parts: dict[str, float]) -> dict[str, float]:
    """Sign mappings joined, each sign with its best fit."""
    out: dict[str, float] = {}
    for part in parts:
        for sign, fit in part.items():
            out[sign] = max(out.get(sign, 0.0), fit)
    return out
