"""The whole job for one reading of one machine: analysis (-> plot data) -> evidence -> reasoning -> advice.

Each stage is a plain function of the previous stage's output; this module
only calls them in order. The command line, the casebook, the demo and every
bench diagnose through ``diagnose``.
"""

from __future__ import annotations

from dataclasses import dataclass

from ..advice import Advice, advise
from ..alarms import judge_alarms
from ..analysis import analyse
from ..analysis.compact import compact_spectra
from ..analysis.plotdata import PlotSet, plot_set
from ..evidence import Evidence, run_extractors, summarise
from ..machine import Machine
from ..readings import Reading, check_points, check_record_length, describe_issue, scale_doubts
from ..reasoning import Reasoner, Reasoning


@dataclass(frozen=True)
class ReadingInfo:
    """What the report says about the reading itself (no samples)."""

    source: str
    timestamp: str | None              # when it was taken, as stated (ISO 8601 where known)
    fs_hz: float
    duration_s: float
    speed_rpm: float | None
    channels: tuple[tuple[str, str | None, str | None], ...]   # name, point, direction
    time_from: str | None = None       # who said when: file, route, command line, file modified
    quality: tuple[dict, ...] = ()     # the quality gates' findings: channel, issue, value, blocking, words


@dataclass(frozen=True)
class Diagnosis:
    """One reading of one machine diagnosed: each stage's result, plot data if asked, faults its settings may miss."""

    machine: Machine
    reading: ReadingInfo
    evidence: Evidence
    reasoning: Reasoning
    advice: Advice
    plots: PlotSet | None            # every channel's plot data from every shaft; the report picks
    reach: tuple[dict, ...] = ()     # faults the reading's settings cannot show or may miss (planner checks)
    spectra: tuple = ()              # each channel's compact spectrum (``analysis.compact``), kept in the history
    forcing: tuple = ()              # the reading's forcing frequencies, as the analysis names them
    alarms: tuple[dict, ...] = ()    # the site's alarms per point on this reading (``engine.alarms``)

    @property
    def facts(self) -> list[dict]:
        """The evidence facts, as a new list."""
        return list(self.evidence.facts)


def reading_info(reading: Reading, taken: tuple[str, str] | None = None) -> ReadingInfo:
    """What the report says of ``reading``; ``taken`` (time, origin), when the caller resolved the
    reading's time (a route's time, --taken-at, the file's date), wins over the file's own."""
    when, origin = taken if taken is not None else (reading.timestamp, "file" if reading.timestamp else None)
    quality = tuple({"channel": q.channel, "issue": q.kind, "value": q.value, "blocking": q.blocking,
                     "words": describe_issue(q)} for q in reading.quality)
    return ReadingInfo(reading.source, when, reading.fs_hz, reading.duration_s, reading.speed_rpm,
                       tuple((c.name, c.point, c.direction) for c in reading.channels), origin, quality)


def diagnose(reading: Reading, machine: Machine, reasoner: Reasoner, advice_data: dict | None = None,
             plots: bool = False, more_facts=None, taken: tuple[str, str] | None = None) -> Diagnosis:
    """Diagnose ``reading`` of ``machine``; ``plots`` also hands over the analysis's plot data.

    ``more_facts``, if given, is called with the evidence facts and the site's alarms judged on this
    reading, and returns further facts to reason over with them (``trend`` facts from the history).
    ``taken`` is (ISO time, where it came from) when the caller knows better
    than the file when the reading was taken.
    """
    check_points(reading, machine)
    check_record_length(reading, machine)
    analysis = analyse(reading, machine)
    figures = plot_set(analysis) if plots else None
    spectra, forcing = compact_spectra(analysis)
    facts = run_extractors(analysis)
    # the site's alarms are judged on the analysis (never on the reasoning); a history link trends their
    # band values and projects to their danger levels, so they are judged before it is called
    alarms = judge_alarms(analysis, set(scale_doubts(analysis.quality)))
    if more_facts is not None:
        facts = facts + list(more_facts(facts, alarms))
    evidence = summarise(facts)
    reasoning = reasoner.reason(list(evidence.facts))
    advice = advise(machine, evidence, reasoning, advice_data)
    return Diagnosis(machine, reading_info(reading, taken), evidence, reasoning, advice, figures,
                     reach_of(reading, machine, analysis.speeds_hz[machine.driver_shaft] * 60, reasoner.rulebook),
                     spectra, forcing, alarms)


def reach_of(reading: Reading, machine: Machine, driver_rpm: float, rulebook=None) -> tuple[dict, ...]:
    """What the reading's settings cannot show, or may miss, at its points: the planner's checks of
    the same settings, with the thresholds of the diagnosis's ``rulebook``, so a fault out of reach is
    reported as such, not as absent."""
    from ..planner.check import CAN, reading_verdicts
    from ..planner.policy import load_policy

    points = sorted({c.point for c in reading.channels if c.point in {p.id for p in machine.points}})
    if not points:
        return ()
    found = reading_verdicts(machine, reading.fs_hz, reading.n_samples, load_policy(), points, driver_rpm, rulebook)
    return tuple(v.as_dict() for v in found if v.state != CAN)


def document_of(d: Diagnosis, made_at: str | None = None, plot_channels: tuple[str, ...] | None = None,
                units=None) -> dict:
    """The report of a diagnosis as one plain dict (engine/common/schemas/report.schema.json).

    ``made_at`` is the report's time (ISO 8601, local with UTC offset, to the
    minute); None means now. Give one for reports that must compare equal. ``plot_channels``: the
    channels plotted (``engine.report.plots.choose_channels``), None for the default view.
    ``units`` (``engine.common.units.ShownUnits``) are the units it shows; None: Hz and mm/s RMS.
    """
    from ..report import report_document

    return report_document(d.machine, d.reading, d.evidence, d.reasoning, d.advice, d.plots, d.reach,
                           made_at=made_at, alarms=d.alarms, plot_channels=plot_channels, units=units)
