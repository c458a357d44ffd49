"""Propose settings for one purpose at one point, each number with a one-line reason.

From the point's requirements (``needs``): Fmax is the smallest step of the
policy that covers every frequency the purpose needs, raised when a sample
rate must put enough samples on an impact or a turn; the sample rate is
2.56 x Fmax; the lines are the smallest standard count whose resolution
(Fmax / lines) splits every spacing by the policy's lines; one record lasts
lines / Fmax; the waveform is as long as the longest turn count or period
the purpose needs. Window, averages and overlap come from the policy.

A bearing point has two spectra with two purposes, each proposed on its own.
The raw spectrum (to Fmax, over the band where impacts ring) shows the
resonance-band energy, the raised floor of late damage and the defect tones
beside the shaft's harmonics: its lines split the 1X harmonics of the point's
shafts by the policy's lines between harmonics. The squared envelope spectrum
shows the defect rates: its Fmax holds the policy's harmonics of the fastest
defect rate and its lines split every defect spacing; the record is as long as
its resolution asks, and the raw spectrum averages over it.
"""

from __future__ import annotations

from dataclasses import dataclass, replace

from ..machine import Machine, Point
from ..machine.kinematics import rates_at
from .needs import Need, Requirements, hz_text, requirements
from .policy import Policy
from .settings import Settings
from .targets import PURPOSE_TITLES, bearings_at


@dataclass(frozen=True)
class Proposal:
    """Settings proposed for one purpose at one point (Hz, lines, s), with a reason for each and what is unmet."""

    point: str
    purpose: str
    fmax_hz: float
    lines: int
    sample_rate_hz: float
    record_s: float
    slowest_shaft: str
    record_revolutions: float        # turns of the slowest shaft in one record
    window: str
    averages: int
    overlap_pct: float
    acquisition_s: float             # the averages with their overlap
    waveform_s: float                # the waveform to keep, for the per-revolution view and tellwave
    waveform_revolutions: float
    envelope_band_hz: tuple[float, float] | None
    reasons: dict                    # setting -> one line
    notes: tuple[str, ...]
    requirements: Requirements
    unmet: tuple[Need, ...] = ()     # needs no standard setting reaches (each has a note)
    # the two spectra of a bearing point, each with its own lines (None for other purposes, whose one
    # spectrum has ``lines``); ``lines`` then stands for the record the envelope's resolution needs
    raw_lines: int | None = None
    envelope_fmax_hz: float | None = None
    envelope_lines: int | None = None

    @property
    def raw_resolution_hz(self) -> float:
        """Line spacing of the raw spectrum, Fmax / its lines, Hz."""
        return self.fmax_hz / (self.raw_lines or self.lines)

    @property
    def envelope_resolution_hz(self) -> float | None:
        """Line spacing of the squared envelope spectrum, Hz (None when there is none)."""
        if self.envelope_fmax_hz is None or self.envelope_lines is None:
            return None
        return self.envelope_fmax_hz / self.envelope_lines

    @property
    def title(self) -> str:
        """The purpose's title, as the plan prints it."""
        return PURPOSE_TITLES[self.purpose]

    @property
    def resolution_hz(self) -> float:
        """Line spacing, Fmax / lines, Hz."""
        return self.fmax_hz / self.lines

    def settings(self) -> Settings:
        """The acquisition this proposal amounts to, as the checks and the proof take it."""
        return Settings(self.fmax_hz, self.lines, self.sample_rate_hz, self.waveform_s, f"proposed ({self.purpose})")


def _standard_lines(wanted: float, policy: Policy) -> int:
    """The fewest standard lines reaching ``wanted``, or the most there are."""
    return next((n for n in policy.standard_lines if n >= wanted * (1 - 1e-9)), policy.standard_lines[-1])


def _holding(lines: int, fmax: float, turns: Need | None, policy: Policy, reasons: dict, key: str) -> int:
    """``lines`` at ``fmax``, raised to the fewest standard lines whose record (lines / Fmax) holds the
    turns ``turns`` asks, with the reason under ``key``: a record one turn short of a turn need is limited
    by the very check that proposed it, and the measured speed may be a little lower than the stated one."""
    if turns is None or lines / fmax >= turns.value * (1 - 1e-9):
        return lines
    raised = _standard_lines(turns.value * fmax, policy)
    if raised > lines:
        reasons[key] = (reasons.get(key, "") + f"; raised to {raised} (resolution {fmax / raised:.3g} Hz) so that "
                        f"one record ({raised / fmax:.3g} s) holds {turns.what} ({turns.value:.3g} s)").lstrip("; ")
    return max(raised, lines)


def _two_spectra(machine: Machine, point: Point, policy: Policy, speeds: dict, fmax: float,
                 tight: Need | None, reasons: dict, turns: Need | None = None) -> tuple[int, float, int]:
    """(raw lines, envelope Fmax, envelope lines) of a bearing point, with their reasons added to ``reasons``."""
    shaft_hz, shaft = min((speeds[b.shaft], b.shaft) for b in bearings_at(machine, point))
    per = policy.lines_between_harmonics
    raw_lines = _standard_lines(fmax / (shaft_hz / per), policy)
    reasons["raw lines"] = (f"resolution {fmax / raw_lines:.3g} Hz puts {shaft_hz / (fmax / raw_lines):.1f} lines "
                            f"between the 1X harmonics of {shaft} ({shaft_hz:.2f} Hz, at least {per:g}): the raw "
                            "spectrum shows the ringing band, the floor and the defect tones beside them; the defect "
                            "rates are resolved in the envelope spectrum")
    h = policy.harmonics["envelope"]
    fastest = max(_defect_rates(machine, point, speeds))
    env_fmax = _step_up(h * fastest, policy.fmax_steps_hz)
    reasons["envelope Fmax"] = (f"{h} harmonics of the fastest defect rate ({fastest:.1f} Hz) need "
                                f"{hz_text(h * fastest)} Hz" + ("; rounded up to the next step"
                                                                if env_fmax > h * fastest * (1 + 1e-9) else ""))
    if tight is None:
        env_lines = policy.standard_lines[0]
        reasons["envelope lines"] = "no spacing to split; the fewest standard lines"
    else:
        env_lines = _standard_lines(env_fmax / (tight.value / tight.lines), policy)
        reasons["envelope lines"] = (f"resolution {env_fmax / env_lines:.3g} Hz puts "
                                     f"{tight.value / (env_fmax / env_lines):.1f} lines across {tight.what} "
                                     f"(at least {tight.lines:g})")
    env_lines = _holding(env_lines, env_fmax, turns, policy, reasons, "envelope lines")
    return raw_lines, env_fmax, env_lines


def _defect_rates(machine: Machine, point: Point, speeds: dict) -> list[float]:
    """Every defect impact rate (BPFO, BPFI, 2 x BSF) of the bearings at ``point``, Hz."""
    every = rates_at(machine, speeds)
    return [every.bearing(b.id).impact_rate_hz(d) for b in bearings_at(machine, point) for d in ("BPFI", "BPFO", "BSF")]


def _step_up(value: float, steps) -> float:
    for s in steps:
        if s >= value * (1 - 1e-9):
            return s
    # above the largest step: round up to a whole multiple of it
    top = steps[-1]
    return top * -(-value // top)


def propose(machine: Machine, point: Point, purpose: str, policy: Policy,
            speed_rpm: float | None = None, rulebook=None) -> Proposal:
    """Settings that meet every need of ``purpose`` at ``point`` (a plain function, no I/O); thresholds
    from the rules of ``rulebook`` (default: the shipped rulebooks)."""
    req = requirements(machine, point, purpose, policy, speed_rpm, rulebook)
    speeds = machine.speeds_at(speed_rpm)
    k = policy.sample_rate_per_fmax
    by = {name: [n for n in req.needs if n.setting == name]
          for name in ("fmax", "sample_rate", "resolution", "duration", "floor", "twin")}
    notes = [f"no setting can show {n.what}: it lies below the {n.floor_hz:g} Hz low-frequency limit; "
             "use a low-frequency sensor" for n in by["floor"] if n.value < n.floor_hz]
    notes += [f"no setting separates them: {n.what}; {n.why}" for n in by["twin"]]

    top: Need = max(by["fmax"], key=lambda n: n.value)
    fast: Need | None = max(by["sample_rate"], key=lambda n: n.value, default=None)
    if fast is not None and fast.value / k > top.value:
        fmax = _step_up(fast.value / k, policy.fmax_steps_hz)
        fmax_why = (f"{fast.what}: {fast.value * fast.span_s:g} {fast.noun} need a sample rate of "
                    f"{fast.value:.0f} Hz, so Fmax {hz_text(fast.value / k)} Hz")
        needed = fast.value / k
    else:
        fmax = _step_up(top.value, policy.fmax_steps_hz)
        fmax_why = f"{top.what} needs {hz_text(top.value)} Hz"
        needed = top.value
    if fmax > needed * (1 + 1e-9):
        fmax_why += "; rounded up to the next step"
    fs = k * fmax

    # a purpose may have no spacing to split (an electrical point whose 2xLF falls exactly on a shaft
    # harmonic and whose motor has no pole pass at this speed): then the fewest standard lines do
    tight: Need | None = min(by["resolution"], key=lambda n: n.value / n.lines, default=None)
    wanted = fmax / (tight.value / tight.lines) if tight is not None else 0.0
    lines = next((n for n in policy.standard_lines if n >= wanted * (1 - 1e-9)), None)
    if lines is None:
        lines = policy.standard_lines[-1]
        assert tight is not None        # without one nothing is wanted, and the first standard line reaches that
        notes.append(f"no standard line count reaches {wanted:.0f} lines at Fmax {fmax:g} Hz: "
                     f"{tight.what} stays unresolved; take a zoom spectrum or a second reading at a lower Fmax")
        tight = min((n for n in by["resolution"] if n.value / n.lines >= fmax / lines * (1 - 1e-9)),
                    key=lambda n: n.value / n.lines, default=tight)
    two: tuple[int | None, float | None, int | None] = (None, None, None)
    spectra: dict = {}
    # one record (lines / Fmax) holds the turns every shaft need asks (the longest): the checks and the
    # diagnosis count a reading's turns, so lines chosen for resolution alone may leave it a turn short
    turns: Need | None = max((n for n in by["duration"] if n.noun.startswith("turns of")), key=lambda n: n.value,
                             default=None)
    raised: dict = {}
    if req.envelope_band_hz is not None:
        # the record is the one the envelope spectrum's resolution needs; its lines at the raw Fmax
        # stand for that record in the checks (the raw spectrum has its own, fewer, lines)
        raw_lines, env_fmax, env_lines = _two_spectra(machine, point, policy, speeds, fmax, tight, spectra, turns)
        two = (raw_lines, env_fmax, env_lines)
        lines = int(round(fmax * env_lines / env_fmax))
    else:
        lines = _holding(lines, fmax, turns, policy, raised, "lines")
    resolution = fmax / lines
    record = lines / fmax

    slow = req.shafts[0]
    long: Need | None = max(by["duration"], key=lambda n: n.value, default=None)
    waveform = max(record, long.value if long else 0.0)
    averages = int(policy.averages[purpose])
    overlap = policy.overlap_pct
    acquisition = record * (1 + (averages - 1) * (1 - overlap / 100))

    src = policy.source_of
    reasons = {
        "Fmax": fmax_why,
        "lines": (f"resolution {resolution:.3g} Hz puts {tight.value / resolution:.1f} lines across "
                  f"{tight.what} (at least {tight.lines:g})" if tight is not None else
                  "no spacing to split for this purpose; the fewest standard lines")
                 + (f"; {raised['lines']}" if raised else ""),
        "sample rate": f"{k:g} x Fmax ({src('sample_rate_per_fmax').split(' (')[0]})",
        "record": (f"envelope lines / envelope Fmax, one average; {slow} is the slowest shaft of interest"
                   if spectra else f"lines / Fmax, one average; {slow} is the slowest shaft of interest"),
        "window": src("window"),
        "averages": (f"{averages} records with {overlap:g} % overlap take {acquisition:.3g} s "
                     f"({src('averages').split(' (')[0]})"),
        "waveform": (f"{long.what} ({long.why})" if long and long.value > record
                     else "one record is enough for this purpose"),
    }
    band = req.envelope_band_hz
    if band is not None:
        top_line = max(req.strong_lines, key=lambda x: x[1])
        reasons["envelope band"] = (
            f"from {policy.bearing_resonance_hz[0]:g} Hz or {policy.envelope_band_clearance:g} x the highest "
            f"machine line ({top_line[0]}, {top_line[1]:.0f} Hz), up to {band[1]:.0f} Hz where bearing impacts "
            f"ring; the kurtogram picks the band within")
    reasons |= spectra
    proposal = Proposal(point.id, purpose, fmax, lines, fs, record, slow, record * speeds[slow], policy.window,
                        averages, overlap, acquisition, waveform, waveform * speeds[slow], band, reasons,
                        tuple(notes), req, (), *two)
    unmet = tuple(n for n in req.needs if not n.met_by(proposal.settings()))
    return replace(proposal, unmet=unmet)
