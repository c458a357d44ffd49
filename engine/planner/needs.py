"""What each purpose needs of the settings at one point, derived from the machine's kinematics.

A ``Need`` is one requirement on one setting: a frequency that must lie under
Fmax, a spacing the lines must split, a sample rate that puts enough samples
on an impact or a turn, a waveform long enough for some turns or periods.
Each need says which evidence routes of which targets it gates, and how:

- ``blocks``: unmet, the route cannot show the fault;
- ``weakens``: unmet, the route may miss it or read it low;
- ``view``: unmet, the waveform or spectrum an analyst looks at suffers,
  but no route the rulebooks use depends on it.

``propose`` meets every need; ``check`` reports each one a setting misses.
Both read this one list, so a proposal is clean under its own checks.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field
from functools import lru_cache

from ..evidence.envelope import harmonics_searched, shared_lines
from ..evidence.matching import SLIP_TOLERANCE
from ..machine import Machine, Point
from ..machine.kinematics import belt_pass_hz, mesh_rates, rates_at, vane_pass_hz
from ..readings.length import FMAX_FACTOR, MIN_REVOLUTIONS_TO_ANALYSE
from .policy import Policy
from .settings import Settings
from .targets import ENVELOPE_DEFECT, ROUTES, Target, bearings_at, meshes_at, motors_at, targets_at

EFFECTS = ("blocks", "weakens", "view")
TWIN_GAP = SLIP_TOLERANCE   # defect rates closer than this cannot be told apart: bearings slip 1-2 %
COINCIDENT = 1e-9           # two rates this close (relative) are one line: floating-point rounding, not a spacing


@dataclass(frozen=True)
class Need:
    """One requirement on one setting: its value (Hz or s), what it is for, and the evidence routes it gates."""

    purpose: str
    setting: str        # fmax, sample_rate, resolution, duration; floor or twin (no setting meets it)
    what: str           # the frequency, spacing or period it is about, named
    value: float        # fmax, sample_rate: least Hz; resolution: the spacing, Hz; duration: least s
    effect: str         # blocks, weakens or view
    gates: tuple[tuple[Target, str], ...]   # (target, route name) it gates
    why: str            # what it is for, one line
    lines: float = 1.0  # resolution: line spacings the spacing must span
    span_s: float = 0.0  # sample_rate, duration: one impact, turn or period, s
    noun: str = ""       # what is counted: "samples on one tooth impact", "turns of fan"
    source: str = ""     # a rule id or a policy key
    floor_hz: float = 0.0  # floor: the lowest frequency a reading keeps
    instead: str = ""      # twin: what would settle it, since no setting does (default: the bearings' text)

    def met_by(self, s: Settings) -> bool:
        """Whether settings ``s`` meet it; a floor need depends on its frequency alone, a twin is never met."""
        tol = 1 + 1e-9
        if self.setting == "floor":
            return self.value >= self.floor_hz
        if self.setting == "twin":
            return False
        if self.setting == "fmax":
            return self.value <= s.fmax_hz * tol
        if self.setting == "sample_rate":
            return self.value <= s.sample_rate_hz * tol
        if self.setting == "resolution":
            return self.lines * s.resolution_hz <= self.value * tol
        return self.value <= s.duration_s * tol

    def measured(self, s: Settings) -> tuple[str, str]:
        """(why the settings miss it, what they would need), each in a few words."""
        if self.setting == "floor":
            return (f"{self.value:.3g} Hz lies below the {self.floor_hz:g} Hz low-frequency limit",
                    "a low-frequency sensor and reading; no Fmax or line count helps")
        if self.setting == "twin":
            if self.instead:
                return self.noun, self.instead
            return (f"bearings slip {100 * TWIN_GAP:g} % or more",
                    "no setting separates them; judge by FTF sidebands round the line, or open the bearing")
        if self.setting == "fmax":
            return (f"{hz_text(self.value)} Hz lies above Fmax {s.fmax_hz:g} Hz",
                    f"Fmax of at least {self.value:.0f} Hz")
        if self.setting == "sample_rate":
            have, least_n = s.sample_rate_hz * self.span_s, self.value * self.span_s
            return (f"{have:.1f} {self.noun} at {s.sample_rate_hz:g} Hz (at least {least_n:g})",
                    f"a sample rate of at least {self.value:.0f} Hz")
        if self.setting == "resolution":
            return (f"{self.value / s.resolution_hz:.1f} lines across {self.value:.3g} Hz at "
                    f"resolution {s.resolution_hz:.3g} Hz (at least {self.lines:g})",
                    f"a resolution of {self.value / self.lines:.3g} Hz or finer")
        have = s.duration_s / self.span_s if self.span_s else 0.0
        return (f"{have:.1f} {self.noun} in {s.duration_s:.3g} s (at least {self.value / self.span_s:g})",
                f"a waveform of at least {self.value:.3g} s")


@lru_cache(maxsize=1)
def _shipped_rulebook():
    from ..reasoning import load_rulebook

    return load_rulebook()


def rules_of(rulebook=None):
    """``rulebook``, or the shipped rulebooks (loaded once) when it is None."""
    return rulebook if rulebook is not None else _shipped_rulebook()


def least(rule: str, kind: str, field: str, rulebook=None) -> float:
    """The lower bound rule ``rule`` of ``rulebook`` (default: the shipped rulebooks) puts on ``field`` of a
    ``kind`` fact, parameters resolved: a need sized by a rule's threshold reads that threshold, so a rule
    change or a site's ``parameters:`` reaches the checks without a copy. A rule the site disables keeps
    the shipped rule's bound (the need still says what the shipped route would ask)."""
    book = rules_of(rulebook)
    try:
        needs = book.rule(rule).needs
    except KeyError:
        needs = _shipped_rulebook().rule(rule).needs
    for pattern in needs:
        for c in pattern.conditions if pattern.kind == kind else ():
            if c.field != field:
                continue
            if c.op == "between":
                return float(c.value[0])
            if c.op in ("at_least", "above") and isinstance(c.value, (int, float)):
                return float(c.value)
    raise KeyError(f"rule {rule} puts no lower bound on {kind}.{field}")


def hz_text(value: float) -> str:
    """A frequency in Hz as text: whole from 100 Hz up, three significant digits below."""
    return f"{value:.0f}" if value >= 100 else f"{value:.3g}"


@dataclass(frozen=True)
class Requirements:
    """Everything one purpose needs at one point."""

    point: str
    purpose: str
    targets: tuple[Target, ...]
    needs: tuple[Need, ...]
    shafts: tuple[str, ...]                          # shafts of interest, slowest first
    envelope_band_hz: tuple[float, float] | None = None
    strong_lines: tuple[tuple[str, float], ...] = field(default=())


def ring_down_s(policy: Policy, resonance_hz: float) -> float:
    """How long an impact ringing at ``resonance_hz`` lasts: its exponential decay
    exp(-zeta 2 pi f t) down to the policy's fraction of the peak."""
    return math.log(1 / policy.ring_down_to) / (policy.resonance_damping_ratio * 2 * math.pi * resonance_hz)


def _strong_lines(machine: Machine, point: Point, speeds: dict, policy: Policy) -> list[tuple[str, float]]:
    """Discrete lines at the point an envelope band must stay clear of: shaft, mesh, vane, belt, line."""
    h = policy.harmonics
    fr = speeds[point.shaft]
    out = [(f"{h['shaft']} x 1X of {point.shaft}", h["shaft"] * fr)]
    for g in meshes_at(machine, point):
        gmf = mesh_rates(g, speeds).gmf_hz
        fast = max(speeds[g.driving_shaft], speeds[g.driven_shaft])
        out.append((f"{h['mesh']} x GMF of {g.id} with sidebands", h["mesh"] * gmf + h["mesh_sidebands"] * fast))
    for r in machine.rotors:
        if r.shaft == point.shaft:
            out.append((f"3 x vane pass of {r.id}", 3 * vane_pass_hz(r, speeds)))
    for b in machine.belts:
        if point.shaft in (b.driving_shaft, b.driven_shaft):
            bpf = belt_pass_hz(b, speeds)
            out.append((f"4 x belt pass of {b.id}", 4 * bpf))
    for m in motors_at(machine, point):
        out.append((f"2 x twice line frequency of {m.id}", 2 * rates_at(machine, speeds).motor(m.id).twice_line_hz))
    return out


def _severity(machine, point, speeds, policy, targets):
    t = targets[0]
    slow = speeds[point.shaft] * 60 <= policy.iso_slow_speed_rpm
    lo, hi = policy.iso_band_slow_hz if slow else policy.iso_band_hz
    gate = ((t, "iso-band"),)
    return [
        Need("severity", "fmax", f"the top of the ISO 20816-3 band ({hi:g} Hz)", hi, "weakens", gate,
             f"the overall level counts {lo:g}-{hi:g} Hz; what lies above Fmax is left out", source="iso_band_hz"),
        Need("severity", "resolution", f"the {lo:g} Hz from 0 Hz up to the ISO band's lower edge", lo, "weakens", gate,
             "the window's leakage from 0 Hz must stay out of the band",
             lines=policy.lines_below_band_edge, source="lines_below_band_edge"),
    ]


NAME_OF = {"BPFO": "BPFO", "BPFI": "BPFI", "BSF": "2 x BSF", "FTF": "FTF"}   # the envelope's defects, as named here


def _own_harmonics(shared: dict, bearing: str, name: str) -> tuple[int, int, str]:
    """(harmonics searched, how many of them the envelope's ownership test gives to this family, and, in
    words, which families take the rest), from ``evidence.envelope.shared_lines``: the planner applies the
    evidence's own rule, not a copy of it."""
    defect = next(d for d, n in NAME_OF.items() if n == name)
    taken = shared[(bearing, defect)]
    words = "; ".join(f"{k} x falls on {'' if j == 1 else f'{j} x '}{NAME_OF[other]} of {who}"
                      for k, who, other, j in taken)
    return harmonics_searched(defect), harmonics_searched(defect) - len(taken), words


def _bearing(machine, point, speeds, policy, targets, band, rulebook):
    needs = []
    sep = policy.separation_lines
    band_lo, band_hi = band
    every = rates_at(machine, speeds)
    shared = shared_lines(every, point.at)
    for b in bearings_at(machine, point):
        of = every.bearing(b.id)
        fr = speeds[b.shaft]
        rates = {"outer-race": ("BPFO", of.bpfo_hz), "inner-race": ("BPFI", of.bpfi_hz),
                 "rolling-element": ("2 x BSF", of.impact_rate_hz("BSF")), "cage": ("FTF", of.ftf_hz)}
        mine = [t for t in targets if t.component == b.id]
        for t in mine:
            name, rate = rates[t.signature]
            twin = min(((other, r) for sig, (other, r) in rates.items() if sig not in (t.signature, "cage")),
                       key=lambda o: abs(o[1] / rate - 1))
            if abs(twin[1] / rate - 1) < TWIN_GAP:
                needs.append(Need(
                    "bearing", "twin", f"{name} of {b.id} ({rate:.1f} Hz) lies within "
                    f"{100 * abs(twin[1] / rate - 1):.1f} % of {twin[0]} ({twin[1]:.1f} Hz)", rate, "weakens",
                    ((t, "envelope"),), "the envelope rate alone cannot tell which part of the bearing is damaged",
                    source="bearing geometry"))
            rule = "bearing.tones.envelope-cage" if t.signature == "cage" else "bearing.tones.envelope"
            searched, own, claimed_by = _own_harmonics(shared, b.id, name)
            wanted = least(rule, "envelope_tone", "harmonics_owned", rulebook)
            if own < wanted:
                needs.append(Need(
                    "bearing", "twin", f"only {own} of the first {searched} harmonics of {name} of {b.id} "
                    f"({rate:.1f} Hz) are its own; {claimed_by}", rate, "weakens", ((t, "envelope"),),
                    "a line two rates share goes to the family with more lines of its own, so this family may "
                    f"fall short of the {wanted:g} harmonics {rule} asks for", source="bearing geometry"))
            rule = "bearing.tones.envelope-cage" if t.signature == "cage" else "bearing.tones.envelope"
            n = least(rule, "envelope_tone", "harmonics_owned", rulebook)
            gate = ((t, "envelope"),)
            needs.append(Need(
                "bearing", "fmax", f"the ringing band from {band_lo:.0f} Hz, wide enough for {n:g} harmonics of "
                f"{name} of {b.id} ({rate:.1f} Hz)", band_lo + n * rate, "weakens", gate,
                f"the squared envelope spectrum of the band under Fmax must hold {n:g} harmonics ({rule})",
                source=rule))
            needs.append(Need(
                "bearing", "resolution", f"{name} of {b.id} ({rate:.2f} Hz) and its harmonics", rate, "blocks", gate,
                f"{ENVELOPE_DEFECT[t.signature]} and its harmonics must keep their own lines in the squared "
                "envelope spectrum", lines=policy.harmonic_lines, source="lines_between_harmonics"))
            order = round(rate / fr)
            if order >= 1 and abs(rate - order * fr) > 1e-9 * rate:
                needs.append(Need(
                    "bearing", "resolution", f"{name} of {b.id} ({rate:.2f} Hz) beside {order}X of {b.shaft} "
                    f"({order * fr:.2f} Hz)", abs(rate - order * fr), "weakens", gate,
                    "a line on a whole shaft order is taken for a shaft harmonic, not a defect",
                    lines=sep, source="lines_between_carrier_and_sideband"))
            needs.append(Need(
                "bearing", "duration", f"{policy.min_revolutions:g} periods of {name} of {b.id}",
                policy.min_revolutions / rate, "weakens", gate,
                "the squared envelope spectrum averages that many impacts or cage turns into its lines",
                span_s=1 / rate, noun=f"periods of {name}", source="min_revolutions"))
        # a cage defect also modulates 1X at the cage rate, which shows without any ringing
        ringing = tuple((t, "envelope") for t in mine if t.signature != "cage")
        needs.append(Need(
            "bearing", "fmax", f"the lower edge of the band where impacts of {b.id} ring ({band_lo:.0f} Hz)",
            band_lo, "blocks", ringing,
            "bearing impacts show where they ring the structure; below it the machine's own vibration hides them",
            source="bearing_resonance_hz"))
        needs.append(Need(
            "bearing", "fmax", f"the envelope band {band_lo:.0f}-{band_hi:.0f} Hz of {b.id}", band_hi, "weakens",
            tuple((t, "envelope") for t in mine),
            "bearing impacts may ring anywhere in this band; the part above Fmax is lost before sampling",
            source="bearing_resonance_hz"))
    fastest = max(every.bearing(b.id).impact_rate_hz(d) for b in bearings_at(machine, point)
                  for d in ("BPFI", "BPFO", "BSF"))
    h = policy.harmonics["envelope"]
    needs.append(Need(
        "bearing", "fmax", f"{h} harmonics of the fastest defect rate ({fastest:.1f} Hz) above {band_lo:.0f} Hz",
        band_lo + h * fastest, "view", (), "the squared envelope spectrum shows a defect's harmonic pattern",
        source="harmonics"))
    dur = ring_down_s(policy, band_hi)
    needs.append(Need(
        "bearing", "sample_rate",
        f"one bearing impact ringing at {band_hi:.0f} Hz ({dur * 1e3:.2f} ms until it falls to "
        f"{policy.ring_down_to:.0%})", policy.min_samples_per_impact / dur, "view", (),
        "enough samples on one impact to see it in the waveform", span_s=dur,
        noun="samples on one bearing impact", source="min_samples_per_impact"))
    return needs


def _gear(machine, point, speeds, policy, targets, rulebook):
    needs = []
    ecc_pairs = least("gear.eccentricity.sidebands", "sideband_family", "pairs", rulebook)
    wear_pairs = least("gear.wear.both-shafts", "sideband_family", "pairs", rulebook)
    sep = policy.separation_lines
    h = policy.harmonics
    for g in meshes_at(machine, point):
        mesh = mesh_rates(g, speeds)
        gmf = mesh.gmf_hz
        shafts = {g.driving_shaft: speeds[g.driving_shaft], g.driven_shaft: speeds[g.driven_shaft]}
        fast = max(shafts.values())
        slow_shaft = min(shafts, key=shafts.get)
        mine = [t for t in targets if t.component == g.id]
        wear = next(t for t in mine if t.signature == "gear-wear")
        for shaft, f_s in shafts.items():
            tooth = next(t for t in mine if t.signature == "gear-tooth" and t.shaft == shaft)
            ecc = next(t for t in mine if t.signature == "gear-eccentricity" and t.shaft == shaft)
            needs += [
                Need("gear", "fmax", f"GMF of {g.id} with one sideband at 1X of {shaft}", gmf + f_s, "blocks",
                     ((tooth, "synchronous-average"),),
                     "the rule wants GMF sidebands at the speed of the shaft whose turns repeat the event",
                     source="gear.tooth.once-per-rev"),
                Need("gear", "fmax", f"GMF of {g.id} with {ecc_pairs:g} sideband pairs at 1X of {shaft}",
                     gmf + ecc_pairs * f_s, "blocks", ((ecc, "sidebands"),),
                     f"an eccentric gear shows {ecc_pairs:g} pairs of sidebands at its speed",
                     source="gear.eccentricity.sidebands"),
                Need("gear", "resolution", f"sidebands at 1X of {shaft} ({f_s:.2f} Hz) beside GMF of {g.id}", f_s,
                     "blocks", ((tooth, "synchronous-average"), (ecc, "sidebands"))
                     + (((wear, "sidebands-both-shafts"),) if shaft == slow_shaft else ()),
                     "each sideband must stand apart from its carrier",
                     lines=sep, source="lines_between_carrier_and_sideband"),
                Need("gear", "duration", f"{policy.min_revolutions:g} turns of {shaft}",
                     policy.min_revolutions / f_s, "blocks", ((tooth, "synchronous-average"),),
                     "the synchronous average that shows one damaged tooth per turn",
                     span_s=1 / f_s, noun=f"turns of {shaft}", source="min_revolutions"),
                Need("gear", "sample_rate", f"one turn of {shaft} ({1e3 / f_s:.1f} ms)",
                     policy.min_samples_per_revolution * f_s, "blocks", ((tooth, "synchronous-average"),),
                     "the synchronous average resamples each turn", span_s=1 / f_s,
                     noun=f"samples per turn of {shaft}", source="min_samples_per_revolution"),
            ]
        needs += [
            Need("gear", "fmax", f"2 x GMF of {g.id} ({2 * gmf:.1f} Hz)", 2 * gmf, "blocks",
                 ((wear, "mesh-harmonics"),), "wear is judged by 2 x GMF against GMF",
                 source="gear.wear.mesh-harmonics"),
            Need("gear", "fmax", f"GMF of {g.id} with {wear_pairs:g} sideband pairs of both shafts",
                 gmf + wear_pairs * fast,
                 "blocks", ((wear, "sidebands-both-shafts"),), "wear spreads sidebands of both shafts",
                 source="gear.wear.both-shafts"),
            Need("gear", "fmax", f"{h['mesh']} x GMF of {g.id} with {h['mesh_sidebands']} orders of sidebands",
                 h["mesh"] * gmf + h["mesh_sidebands"] * fast, "view", (),
                 "the mesh harmonics and their sidebands, for the trend of wear and misalignment", source="harmonics"),
            Need("gear", "sample_rate", f"one tooth impact (one mesh period, 1/GMF = {1e3 / gmf:.2f} ms)",
                 policy.min_samples_per_impact * gmf, "view", (),
                 "enough samples on a tooth impact to see it in the waveform", span_s=1 / gmf,
                 noun="samples on one tooth impact", source="min_samples_per_impact"),
        ]
        f_ht = mesh.htf_hz
        if policy.hunting_tooth_periods > 0:
            needs.append(Need(
                "gear", "duration", f"{policy.hunting_tooth_periods:g} hunting-tooth period of {g.id} "
                f"({1 / f_ht:.2f} s)", policy.hunting_tooth_periods / f_ht, "view", (),
                "every pair of teeth meets once in it", span_s=1 / f_ht,
                noun=f"hunting-tooth periods of {g.id}", source="hunting_tooth_periods"))
    return needs


def _shaft(machine, point, speeds, policy, targets, rulebook):
    t = targets[0]
    s, fr = point.shaft, speeds[point.shaft]
    sep = policy.separation_lines
    rule_h, rule_half = "shaft.looseness.harmonics", "shaft.looseness.half-orders"
    n_h = least(rule_h, "harmonic_series", "count", rulebook)
    n_half = least(rule_half, "harmonic_series", "count", rulebook)
    slow = min(sorted(machine.shafts_seen_from(s)), key=lambda x: speeds[x])
    floor = policy.low_frequency_limit_hz
    needs = [
        Need("shaft", "floor", f"1X of {s} ({fr:.3g} Hz)", fr, "blocks", ((t, "harmonics"),),
             "the harmonic series is judged against 1X", source="low_frequency_limit_hz", floor_hz=floor),
        Need("shaft", "floor", f"0.5X of {s} ({0.5 * fr:.3g} Hz)", 0.5 * fr, "blocks", ((t, "half-orders"),),
             "the first half order", source="low_frequency_limit_hz", floor_hz=floor),
        Need("shaft", "fmax", f"{n_h:g} x 1X of {s} ({n_h * fr:.1f} Hz)", n_h * fr, "blocks", ((t, "harmonics"),),
             f"looseness shows a long series of 1X harmonics ({rule_h})", source=rule_h),
        Need("shaft", "fmax", f"{n_half:g} x 1X of {s} ({n_half * fr:.1f} Hz)", n_half * fr, "blocks",
             ((t, "half-orders"),), f"half orders count beside a series of 1X harmonics ({rule_half})",
             source=rule_half),
        Need("shaft", "resolution", f"1X harmonics of {s} ({fr:.2f} Hz apart)", fr, "blocks", ((t, "harmonics"),),
             "each harmonic must keep its own peak", lines=policy.harmonic_lines, source="lines_between_harmonics"),
        Need("shaft", "resolution", f"1X harmonics of {s} ({fr:.2f} Hz apart), cleanly", fr, "weakens",
             ((t, "harmonics"),), "a small harmonic beside a large one needs the sideband rule's spacing",
             lines=sep, source="lines_between_carrier_and_sideband"),
        Need("shaft", "resolution", f"half orders of {s} ({0.5 * fr:.2f} Hz from 1X)", 0.5 * fr, "blocks",
             ((t, "half-orders"),), "0.5X must stand apart from 0 Hz and from 1X", lines=sep,
             source="lines_between_carrier_and_sideband"),
        Need("shaft", "fmax", f"{policy.harmonics['shaft']} x 1X of {s}", policy.harmonics["shaft"] * fr, "view", (),
             "the whole harmonic series that looseness and rubs produce", source="harmonics"),
        Need("shaft", "duration", f"{policy.min_revolutions:g} turns of {slow}", policy.min_revolutions / speeds[slow],
             "view", (), "a per-revolution view and a stable synchronous average of the slowest shaft here",
             span_s=1 / speeds[slow], noun=f"turns of {slow}", source="min_revolutions"),
    ]
    if slow != s:
        needs.append(Need("shaft", "resolution", f"1X of {slow} ({speeds[slow]:.2f} Hz) above 0 Hz", speeds[slow],
                          "view", (), "the slow shaft's own 1X", lines=sep,
                          source="lines_between_carrier_and_sideband"))
    pair = _closest_pair(machine, point, speeds, policy)
    if pair is not None:
        gap, text = pair
        needs.append(Need("shaft", "resolution", text, gap, "view", (),
                          "two lines of different sources that a spectrum must tell apart", lines=sep,
                          source="lines_between_carrier_and_sideband"))
    return needs


def _closest_pair(machine, point, speeds, policy):
    """The closest pair of a harmonic of the point's shaft and a line of another source:
    the first harmonics of other shafts and twice line frequency (exactly equal lines,
    such as two coupled shafts, are one line and are left out)."""
    fr = speeds[point.shaft]
    own = [(k * fr, f"{k}X of {point.shaft}") for k in range(1, policy.harmonics["shaft"] + 1)]
    others = [(k * hz, f"{k}X of {name}") for name, hz in speeds.items()
              if abs(hz - fr) > 1e-9 * fr for k in (1, 2, 3)]
    others += [(m.twice_line_hz, f"2xLF of {m.motor}") for m in rates_at(machine, speeds).motors]
    best = None
    for f1, l1 in own:
        for f2, l2 in others:
            gap = abs(f1 - f2)
            if gap > 1e-3 * f1 and (best is None or gap < best[0]):
                best = (gap, f"{l1} ({f1:.2f} Hz) beside {l2} ({f2:.2f} Hz)")
    return best


def _electrical(machine, point, speeds, policy, targets, rulebook):
    needs = []
    bar_pairs = least("electrical.rotor-bar.pole-pass", "sideband_family", "pairs", rulebook)
    sep = policy.separation_lines
    for m in motors_at(machine, point):
        fr = speeds[m.shaft]
        rates = rates_at(machine, speeds).motor(m.id)
        two_lf = rates.twice_line_hz
        pole_pass = rates.pole_pass_hz
        stator = next(t for t in targets if t.component == m.id and t.signature == "stator")
        bars = next(t for t in targets if t.component == m.id and t.signature == "rotor-bar")
        needs.append(Need("electrical", "fmax", f"twice line frequency of {m.id} ({two_lf:g} Hz)", two_lf, "blocks",
                          ((stator, "twice-line"),), "a stator or air-gap problem shows at 2 x line frequency",
                          source="electrical.stator.twice-line"))
        k = max(1, round(two_lf / fr))
        gap = abs(two_lf - k * fr)
        if gap <= COINCIDENT * two_lf:
            # one line with two sources: no resolution splits it, so it is a limit to report, not a spacing
            needs.append(Need(
                "electrical", "twin", f"2xLF of {m.id} ({two_lf:g} Hz) falls on {k}X of {m.shaft} "
                f"({k * fr:.2f} Hz)", two_lf, "weakens", ((stator, "twice-line"),),
                "at this speed the line at twice line frequency is also a shaft harmonic; its height cannot be "
                "given to the stator alone", source="kinematics", noun="the two rates coincide exactly",
                instead="no setting separates them; measure at another speed, or judge 2xLF by its drop at the "
                "instant power is cut"))
        else:
            needs.append(Need(
                "electrical", "resolution", f"2xLF ({two_lf:g} Hz) beside {k}X of {m.shaft} ({k * fr:.2f} Hz)", gap,
                "weakens", ((stator, "twice-line"),), "twice line frequency must stand apart from the shaft harmonic",
                lines=sep, source="lines_between_carrier_and_sideband"))
        if pole_pass is not None:
            needs += [
                Need("electrical", "fmax", f"1X of {m.shaft} with {bar_pairs:g} pair(s) of pole-pass sidebands",
                     fr + bar_pairs * pole_pass,
                     "blocks", ((bars, "pole-pass"),), "rotor bar damage modulates 1X at the pole pass frequency",
                     source="electrical.rotor-bar.pole-pass"),
                Need("electrical", "resolution", f"pole-pass sidebands of {m.id} ({pole_pass:.3f} Hz) beside 1X",
                     pole_pass, "blocks", ((bars, "pole-pass"),), "each sideband must stand apart from 1X",
                     lines=sep, source="lines_between_carrier_and_sideband"),
            ]
        rbp = rates.rotor_bar_hz
        if rbp:
            needs.append(Need("electrical", "fmax", f"rotor bar pass of {m.id} with 2xLF sidebands", rbp + two_lf,
                              "view", (), "the rotor bar pass line and its sidebands, for the trend",
                              source="harmonics"))
    return needs


def _turns(machine: Machine, point: Point, speeds, policy: Policy, purpose: str, targets) -> list[Need]:
    """The turns every reading at ``point`` needs, whatever its purpose: those of the slowest shaft the
    point sees (``Machine.shafts_seen_from``), below which the record is refused before the analysis
    (engine/readings/length.py), and, for each fault, those of its own shaft (the shaft of its
    component), below which the reading rules limit what the diagnosis concludes."""
    seen = machine.shafts_seen_from(point.shaft)
    slowest = min(sorted(seen), key=lambda s: speeds[s])
    hz = speeds[slowest]
    gates = tuple((t, name) for t in targets for name, _ in ROUTES[t.signature])
    fastest = max(sorted(speeds), key=lambda s: speeds[s])
    needs = [
        Need(purpose, "duration", f"{MIN_REVOLUTIONS_TO_ANALYSE:g} turns of {slowest}, the slowest shaft "
             f"{point.id} sees", MIN_REVOLUTIONS_TO_ANALYSE / hz, "blocks", gates,
             "a shorter record is refused before the analysis",
             span_s=1 / hz, noun=f"turns of {slowest}", source="engine/readings/length.py"),
        # the record's sample rate / FMAX_FACTOR must reach 1X of the machine's fastest shaft, whatever
        # shaft the purpose is about, or the record is refused; in the policy's Fmax (sample rate / its factor)
        Need(purpose, "fmax", f"1X of {fastest}, the fastest shaft of the machine",
             speeds[fastest] * FMAX_FACTOR / policy.sample_rate_per_fmax, "blocks", gates,
             "a record sampled slower is refused before the analysis", source="engine/readings/length.py"),
    ]
    for shaft in sorted({t.shaft for t in targets}, key=lambda s: (speeds[s], s)):
        own = tuple((t, name) for t in targets if t.shaft == shaft for name, _ in ROUTES[t.signature])
        needs.append(Need(
            purpose, "duration", f"{policy.min_revolutions:g} turns of {shaft}, the shaft of the fault",
            policy.min_revolutions / speeds[shaft], "weakens", own,
            "with fewer, the reading rules limit or withhold what the diagnosis concludes of it",
            span_s=1 / speeds[shaft], noun=f"turns of {shaft}", source="min_revolutions"))
    return needs


def requirements(machine: Machine, point: Point, purpose: str, policy: Policy,
                 speed_rpm: float | None = None, rulebook=None) -> Requirements:
    """What ``purpose`` needs of the settings at ``point``, with the driver at ``speed_rpm``; thresholds
    from the rules of ``rulebook`` (default: the shipped rulebooks; give a diagnosis's, overlays included)."""
    speeds = machine.speeds_at(speed_rpm)
    targets = tuple(targets_at(machine, point, purpose))
    band = None
    strong: tuple[tuple[str, float], ...] = ()
    if purpose == "severity":
        needs = _severity(machine, point, speeds, policy, targets)
    elif purpose == "bearing":
        strong = tuple(_strong_lines(machine, point, speeds, policy))
        lo, hi = policy.bearing_resonance_hz
        top_line = max(hz for _, hz in strong)
        band = (max(lo, policy.envelope_band_clearance * top_line), hi)
        if band[0] >= band[1]:
            band = (band[0], band[0] * hi / lo)
        needs = _bearing(machine, point, speeds, policy, targets, band, rulebook)
    elif purpose == "gear":
        needs = _gear(machine, point, speeds, policy, targets, rulebook)
    elif purpose == "shaft":
        needs = _shaft(machine, point, speeds, policy, targets, rulebook)
    elif purpose == "electrical":
        needs = _electrical(machine, point, speeds, policy, targets, rulebook)
    else:
        raise ValueError(f"unknown purpose {purpose!r}")
    needs = list(needs) + _turns(machine, point, speeds, policy, purpose, targets)
    shafts = {t.shaft for t in targets} | {point.shaft}
    if purpose == "shaft":
        shafts |= machine.shafts_seen_from(point.shaft)
    return Requirements(point.id, purpose, targets, tuple(needs), tuple(sorted(shafts, key=lambda s: (speeds[s], s))),
                        band, strong)
