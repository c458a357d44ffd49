"""Alarm limits per point: what the site set, in the machine file or a site alarm file.

An alarm names a point, a band, a quantity and two levels (alert, danger). The
band is ``overall``, orders of the point's shaft (``1X``, ``2-4X``), a range in
Hz (``100-400 Hz``), a bearing's rates with their harmonics (``bearing rates``,
``bearing B2 rates x4``) or a gear mesh with its sidebands (``GMF +-3``,
``GMF M1 +-3``). A band is turned into frequency ranges here, at the shaft
speeds of the reading, from the rates of ``kinematics`` (every rate's one home).

A site alarm file (``--alarms FILE``) lists alarms by machine name; an alarm
there replaces the machine file's alarm of the same point, band and quantity.
Every problem is a ``MachineError`` naming the file, the line and the field.
"""

from __future__ import annotations

import difflib
import re
from collections.abc import Mapping
from dataclasses import dataclass, replace
from typing import TYPE_CHECKING

from ..common.errors import MachineError
from ..common.yamlfile import read_yaml, validate
from .kinematics import rates_at

if TYPE_CHECKING:
    from .model import Machine

QUANTITY_UNITS = {"velocity_mm_s_rms": "mm/s RMS", "acceleration_g_rms": "g RMS", "acceleration_g_peak": "g peak"}
DEFAULT_BEARING_HARMONICS = 3
LINE_BINS = 2.0          # a Hann-windowed tone spreads over its main lobe, +-2 lines (Heinzel et al. 2002, table 1)
SHAFT_LINE_FRACTION = 0.005   # shaft-locked lines sit within 0.5 % of the refined speed's multiples (DEVELOPERS.md)
MAX_ORDER = 1000.0            # the machine schema's largest bearing multiple is 200; a band past 1000X is a typo
MAX_BAND_HZ = 1_000_000.0     # no reader takes a sample rate above 1 MHz, so no spectrum reaches past it
BEARING_SLIP_FRACTION = 0.02  # rolling elements slip 1-2 %: bearing rates wander that far (common practice)

_ORDERS = re.compile(r"^(\d+(?:\.\d+)?)(?:-(\d+(?:\.\d+)?))?X$")
_HZ = re.compile(r"^(\d+(?:\.\d+)?)-(\d+(?:\.\d+)?) Hz$")
_BEARING = re.compile(r"^bearing(?: ([A-Za-z][A-Za-z0-9_.-]*))? rates(?: x(\d+))?$")
_GMF = re.compile(r"^GMF(?: ([A-Za-z][A-Za-z0-9_.-]*))?(?: \+-(\d+))?$")


@dataclass(frozen=True)
class Alarm:
    """One site limit at one point: the band as written, its quantity, alert and danger levels."""

    point: str
    band: str
    quantity: str
    alert: float
    danger: float
    source: str
    where: str                 # file:line it was set at

    @property
    def key(self) -> tuple[str, str, str]:
        """What a later file replaces: the same point, band and quantity."""
        return (self.point, self.band, self.quantity)

    @property
    def unit(self) -> str:
        """The quantity's unit as the report shows it."""
        return QUANTITY_UNITS[self.quantity]

    @property
    def indicator(self) -> str:
        """The stored indicator that holds this alarm's measured value (its unit ends the name)."""
        if self.band == "overall":
            return {"velocity_mm_s_rms": "velocity_rms_mm_s", "acceleration_g_rms": "accel_rms_g",
                    "acceleration_g_peak": "accel_peak_g"}[self.quantity]
        return band_indicator(self.band, self.quantity)


def band_indicator(band: str, quantity: str) -> str:
    """The indicator name of a band's value: ``band[2-4X]_mm_s`` (velocity) or ``band[2-4X]_g``."""
    return f"band[{band}]_" + ("mm_s" if quantity.startswith("velocity") else "g")


def parse_alarms(items, doc, base: tuple, machine: Machine | None = None) -> tuple[Alarm, ...]:
    """The alarms of ``items`` (schema-checked dicts at ``base`` in ``doc``), each checked for sense
    and, when ``machine`` is given, against its points, bearings and meshes."""
    out = []
    for i, a in enumerate(items):
        where = (*base, i)

        def fail(field_name, problem, where=where):
            dotted = ".".join(str(p) for p in (*where, field_name))
            raise MachineError(f"{dotted}: {problem}", path=doc.path, line=doc.line_of([*where, field_name]))

        if not a["danger"] > a["alert"]:
            fail("danger", f"the danger level ({a['danger']:g}) must be above the alert level ({a['alert']:g})")
        if a["quantity"] == "acceleration_g_peak" and a["band"] != "overall":
            fail("quantity", "a peak is a waveform's, so acceleration_g_peak is for the overall band only")
        m = _ORDERS.match(a["band"]) or _HZ.match(a["band"])
        if m and m.group(2) is not None and not float(m.group(1)) < float(m.group(2)):
            fail("band", f"the band {a['band']!r} must go from low to high")
        if m and not float(m.group(1)) > 0 and _ORDERS.match(a["band"]):
            fail("band", "an order band starts above 0X")
        top = MAX_ORDER if _ORDERS.match(a["band"]) else MAX_BAND_HZ
        if m and float(m.group(2) or m.group(1)) > top:
            fail("band", f"the band {a['band']!r} goes above {top:g}{'X' if top == MAX_ORDER else ' Hz'}")
        alarm = Alarm(a["point"], a["band"], a["quantity"], float(a["alert"]), float(a["danger"]),
                      a.get("source", ""), f"{doc.path}:{doc.line_of(list(where))}")
        if machine is not None:
            try:
                band_ranges_hz(alarm, machine, machine.shaft_speeds_hz, 1.0)
            except MachineError as exc:
                fail("band" if machine.has_point(alarm.point) else "point", exc.problem)
        out.append(alarm)
    return tuple(out)


def band_ranges_hz(alarm: Alarm, machine: Machine, speeds_hz: Mapping[str, float],
                   resolution_hz: float) -> list[tuple[float, float]]:
    """The frequency ranges (Hz, low to high, not overlapping) of ``alarm``'s band at ``speeds_hz``,
    each line widened by its main lobe (``LINE_BINS`` x ``resolution_hz``) and the wander of its rate.
    An empty list for ``overall``; a MachineError when the band names what the machine lacks."""
    if not machine.has_point(alarm.point):
        known = ", ".join(p.id for p in machine.points) or "none"
        raise MachineError(f"no measurement point {alarm.point!r}; points are {known}", path=machine.source)
    point = machine.point(alarm.point)
    band = alarm.band
    if band == "overall":
        return []
    lobe = LINE_BINS * resolution_hz
    shaft_hz = speeds_hz[point.shaft]
    if m := _HZ.match(band):
        return [(float(m.group(1)), float(m.group(2)))]
    if m := _ORDERS.match(band):
        lo = float(m.group(1)) * shaft_hz
        hi = float(m.group(2)) * shaft_hz if m.group(2) else lo
        return [(lo * (1 - SHAFT_LINE_FRACTION) - lobe, hi * (1 + SHAFT_LINE_FRACTION) + lobe)]
    rates = rates_at(machine, speeds_hz)
    if m := _BEARING.match(band):
        bearing = m.group(1) or point.at
        if bearing not in {b.bearing for b in rates.bearings}:
            raise MachineError(f"{band!r}: {bearing!r} is not a bearing of this machine"
                               + ("" if m.group(1) else f" (point {point.id} sits at it)"), path=machine.source)
        n = int(m.group(2) or DEFAULT_BEARING_HARMONICS)
        b = rates.bearing(bearing)
        lines = [k * f for f in (b.bpfo_hz, b.bpfi_hz, b.bsf_hz) for k in range(1, n + 1)]
        return _merged([(f * (1 - BEARING_SLIP_FRACTION) - lobe, f * (1 + BEARING_SLIP_FRACTION) + lobe)
                        for f in lines])
    m = _GMF.match(band)
    assert m is not None        # the schema's pattern allows no other band
    meshes = [g for g in rates.meshes if m.group(1) in (None, g.mesh)
              and (m.group(1) or point.shaft in (g.driving_shaft, g.driven_shaft))]
    if len(meshes) != 1:
        named = m.group(1) or f"on shaft {point.shaft}"
        raise MachineError(f"{band!r}: {'no gear mesh' if not meshes else 'more than one gear mesh'} {named}; "
                           f"name one: GMF {' / GMF '.join(g.mesh for g in rates.meshes) or '(none)'}",
                           path=machine.source)
    g = meshes[0]
    n = int(m.group(2) or 0)
    spacing = max(speeds_hz[g.driving_shaft], speeds_hz[g.driven_shaft])   # both shafts' sidebands inside
    return [(g.gmf_hz * (1 - SHAFT_LINE_FRACTION) - n * spacing - lobe,
             g.gmf_hz * (1 + SHAFT_LINE_FRACTION) + n * spacing + lobe)]


def _merged(ranges: list[tuple[float, float]]) -> list[tuple[float, float]]:
    """Ranges sorted and joined where they overlap, so no line is counted twice."""
    out: list[tuple[float, float]] = []
    for lo, hi in sorted(ranges):
        if out and lo <= out[-1][1]:
            out[-1] = (out[-1][0], max(out[-1][1], hi))
        else:
            out.append((lo, hi))
    return out


def with_file_alarms(machine: Machine, doc) -> Machine:
    """``machine`` with the alarms of its own file's ``alarms:`` section (``doc``, the file read), checked
    against its points, bearings and meshes."""
    items = doc.data.get("alarms")
    return replace(machine, alarms=parse_alarms(items, doc, ("alarms",), machine)) if items else machine


def load_alarm_file(path) -> dict[str, tuple[Alarm, ...]]:
    """A site alarm file: machine name -> its alarms (checked against the schema, not yet a machine)."""
    doc = read_yaml(path, MachineError)
    if not isinstance(doc.data, dict):
        raise MachineError("expected a mapping with 'machines'", path=doc.path, line=1)
    validate(doc, "alarms.schema.json", MachineError)
    return {name: parse_alarms(items, doc, ("machines", name)) for name, items in doc.data["machines"].items()}


def measures_the_same(alarm: Alarm, machine: Machine) -> tuple:
    """What ``alarm`` measures on ``machine``: its point, quantity and band resolved to frequency ranges
    at the machine file's speeds, so one band written two ways (``GMF +-3`` and ``GMF stage1 +-3`` at a
    point that sees one mesh, ``bearing rates`` and ``bearing pump_de rates x3`` at pump_de) is one."""
    ranges = band_ranges_hz(alarm, machine, machine.shaft_speeds_hz, 1.0)
    return (alarm.point, alarm.quantity, "overall" if alarm.band == "overall"
            else tuple((round(lo, 6), round(hi, 6)) for lo, hi in ranges))


def with_site_alarms(machine: Machine, files=()) -> Machine:
    """``machine`` with the alarms of the site alarm ``files`` laid over its own (later files win): a
    site alarm replaces any alarm of the same point and quantity whose band resolves to the same
    frequency ranges, however it is written. An alarm for a point, bearing or mesh the machine lacks
    is a MachineError naming the alarm file."""
    # each alarm beside what it measures, resolved once (the machine's own when a site alarm first needs them)
    alarms: list[tuple[Alarm, tuple]] | None = None
    for path in files:
        for a in load_alarm_file(path).get(machine.name, ()):
            try:
                same = measures_the_same(a, machine)
            except MachineError as exc:
                file, _, line = a.where.rpartition(":")
                raise MachineError(f"alarm for {machine.name} at {a.point} ({a.band}): {exc.problem}",
                                   path=file, line=int(line) if line.isdigit() else None) from None
            if alarms is None:
                alarms = [(b, measures_the_same(b, machine)) for b in machine.alarms]
            at = [i for i, (b, measured) in enumerate(alarms) if b.key == a.key or measured == same]
            if at:                     # in the place of the first it replaces, the others dropped
                alarms[at[0]] = (a, same)
                alarms = [x for i, x in enumerate(alarms) if i not in at[1:]]
            else:
                alarms.append((a, same))
    return machine if alarms is None else replace(machine, alarms=tuple(a for a, _ in alarms))


def check_alarm_machines(files, known) -> None:
    """Each site alarm file of ``files`` must name a machine of the run (``known``: their names), and no
    name in it may be a near miss of one (a different case or spacing, or a letter or two off: a typo
    that would leave the alarms silently unused). A file may name other machines too: one file can
    hold a whole site's alarms. A MachineError names the file, the line and the known machines."""
    known = sorted(set(known))
    folded = {" ".join(k.casefold().split()): k for k in known}
    listed = ", ".join(repr(k) for k in known) or "none"
    for path in files:
        doc = read_yaml(path, MachineError)
        if not isinstance(doc.data, dict):
            raise MachineError("expected a mapping with 'machines'", path=doc.path, line=1)
        validate(doc, "alarms.schema.json", MachineError)
        names = list(doc.data["machines"])
        for name in names:
            if name in known:
                continue
            near = folded.get(" ".join(name.casefold().split())) or next(
                iter(difflib.get_close_matches(name, known, n=1, cutoff=0.85)), None)
            if near is not None:
                raise MachineError(f"machines: no machine {name!r} in this run; did you mean {near!r}? "
                                   f"Known machines: {listed}", path=doc.path, line=doc.line_of(["machines", name]))
        if not any(name in known for name in names):
            shown = ", ".join(repr(n) for n in names) or "none"
            raise MachineError(f"machines: names no machine of this run ({shown}); known machines: {listed}",
                               path=doc.path, line=doc.line_of(["machines"]))
