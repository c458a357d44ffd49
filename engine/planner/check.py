"""Check settings against a machine: what each setting cannot show, and why.

``check`` compares settings with the requirements of every purpose at every
point (``needs``) and returns one ``Limitation`` per need the settings miss,
merged over points. ``verdicts`` turns them into one word per fault:
``cannot show`` (every evidence route the rulebooks use is blocked), ``may
miss`` (a route is blocked or weakened) or ``can show``.
``limitations_of_reading`` runs the same checks on a reading already taken,
so a diagnosis can say which faults its reading could not show.
All are plain functions of plain values, with no I/O.
"""

from __future__ import annotations

from dataclasses import dataclass

from ..machine import Machine
from ..machine.kinematics import forcing_frequencies
from .needs import requirements
from .policy import Policy
from .settings import Settings, reading_settings
from .targets import ROUTES, Target, purposes_at, targets_at

CANNOT, MAY_MISS, CAN = "cannot show", "may miss", "can show"


@dataclass(frozen=True)
class Limitation:
    """One thing the settings cannot show, why, and what would."""

    family: str                  # purpose: severity, bearing, gear, shaft or electrical
    setting: str                 # fmax, sample_rate, resolution, duration; floor or twin (no setting lifts it)
    what: str
    why: str
    needs: str
    effect: str                  # blocks, weakens or view
    routes: tuple[tuple[Target, str], ...]
    points: tuple[str, ...]
    source: str

    @property
    def faults(self) -> tuple[str, ...]:
        """The targets (fault on component) whose evidence it blocks or weakens."""
        return tuple(dict.fromkeys(t.label for t, _ in self.routes))

    def as_dict(self) -> dict:
        """A plain dict of the limitation, with the faults it touches."""
        return {"family": self.family, "setting": self.setting, "what": self.what, "why": self.why,
                "needs": self.needs, "effect": self.effect, "faults": list(self.faults),
                "points": list(self.points), "source": self.source}


@dataclass(frozen=True)
class Verdict:
    """What settings can do for one target: cannot show, may miss or can show, and why."""

    target: Target
    state: str                   # cannot show, may miss or can show
    reasons: tuple[str, ...]     # the limitations behind it, one line each

    def as_dict(self) -> dict:
        """A plain dict of the verdict, the target's fields flattened in."""
        t = self.target
        return {"purpose": t.purpose, "fault": t.signature, "component": t.component, "shaft": t.shaft,
                "label": t.label, "state": self.state, "reasons": list(self.reasons)}


def check(machine: Machine, settings: Settings, policy: Policy, points=None, purposes=None,
          speed_rpm: float | None = None, rulebook=None) -> list[Limitation]:
    """Every requirement of ``purposes`` (default all) at ``points`` (default all) that ``settings`` miss,
    thresholds from the rules of ``rulebook`` (default: the shipped rulebooks)."""
    merged: dict[tuple, Limitation] = {}
    for point in machine.points:
        if points is not None and point.id not in points:
            continue
        for purpose in purposes_at(machine, point):
            if purposes is not None and purpose not in purposes:
                continue
            for need in requirements(machine, point, purpose, policy, speed_rpm, rulebook).needs:
                if need.met_by(settings):
                    continue
                why, needed = need.measured(settings)
                key = (need.purpose, need.setting, need.what, need.effect)
                if key in merged:
                    old = merged[key]
                    merged[key] = Limitation(old.family, old.setting, old.what, old.why, old.needs, old.effect,
                                             tuple(dict.fromkeys(old.routes + need.gates)),
                                             old.points + (point.id,), old.source)
                else:
                    merged[key] = Limitation(need.purpose, need.setting, need.what, why, needed, need.effect,
                                             need.gates, (point.id,), need.source)
    order = {"blocks": 0, "weakens": 1, "view": 2}
    return sorted(merged.values(), key=lambda lim: (order[lim.effect], lim.family))


def verdicts(targets, limitations: list[Limitation]) -> list[Verdict]:
    """Can the settings show each target? From the routes the limitations block or weaken."""
    out = []
    for t in dict.fromkeys(targets):
        routes = [name for name, _ in ROUTES[t.signature]]
        blocked, reasons = set(), []
        weakened = False
        for lim in limitations:
            hit = [route for target, route in lim.routes if target == t]
            if not hit or lim.effect == "view":
                continue
            reasons.append(f"{lim.what}: {lim.why}")
            if lim.effect == "blocks":
                blocked |= set(hit)
            else:
                weakened = True
        if blocked >= set(routes):
            state = CANNOT
        elif blocked or weakened:
            state = MAY_MISS
        else:
            state = CAN
        out.append(Verdict(t, state, tuple(dict.fromkeys(reasons))))
    return out


def frequencies_above(machine: Machine, settings: Settings, speed_rpm: float | None = None):
    """The machine's forcing frequencies that lie above Fmax (the trade's alias-free top)."""
    return [f for f in forcing_frequencies(machine, speed_rpm) if f.frequency_hz > settings.fmax_hz]


def limitations_of_reading(machine: Machine, fs_hz: float, n_samples: int, policy: Policy,
                           points=None, speed_rpm: float | None = None, rulebook=None) -> list[Limitation]:
    """The checks of ``check`` for a reading taken at ``fs_hz`` with ``n_samples`` per channel
    (Fmax = fs / 2.56, lines = samples / 2.56), at the reading's ``points`` (default all)."""
    settings = reading_settings(policy, fs_hz, n_samples, "reading")
    return check(machine, settings, policy, points=points, speed_rpm=speed_rpm, rulebook=rulebook)


def reading_verdicts(machine: Machine, fs_hz: float, n_samples: int, policy: Policy,
                     points=None, speed_rpm: float | None = None, rulebook=None) -> list[Verdict]:
    """For a reading already taken: can it show each fault the purposes at its points look for?
    Thresholds from the rules of ``rulebook``: the diagnosis's, site overlays included (default: shipped).

    A diagnosis lists the ``cannot show`` and ``may miss`` verdicts, with their
    reasons, instead of reporting those faults absent.
    """
    chosen = [p for p in machine.points if points is None or p.id in points]
    targets = [t for p in chosen for u in purposes_at(machine, p) for t in targets_at(machine, p, u)]
    return verdicts(targets, limitations_of_reading(machine, fs_hz, n_samples, policy, points, speed_rpm, rulebook))
