"""Whether a reading belongs to the machine file it is diagnosed with.

A channel that names a measurement point the machine does not have was taken
on another machine, or its sidecar (or ``--point``) is wrong: placed on no
bearing and on no shaft of this machine, its lines would be judged against
another machine's rates and the diagnosis would be confidently wrong. That is
an error of the reading against this machine (``ReadingError``, exit code 4),
raised before any analysis. A channel that names no point at all is analysed
as before, on the shaft of the first channel that has one (else the driving
shaft): many recorders store no point.
"""

from __future__ import annotations

from ..common.errors import ReadingError

NAMED = 4     # channels named in the error before "and N more"


def check_points(reading, machine) -> None:
    """Raise ``ReadingError`` naming each channel of ``reading`` whose point ``machine`` lacks, then at the
    first 1X phase reading that names no place of it (``check_phase``)."""
    known = [p.id for p in machine.points]
    strays = [c for c in reading.channels if c.point and c.point not in known]
    if not strays:
        check_phase(reading, machine)
        return
    listed = ", ".join(f"{c.name!r} at point {c.point!r}" for c in strays[:NAMED])
    if len(strays) > NAMED:
        listed += f" and {len(strays) - NAMED} more"
    points = f"its points are {', '.join(known)}" if known else "its file lists no points"
    lacks = "has no such point" if len(strays) == 1 else "has none of these points"
    raise ReadingError(
        f"{'channel' if len(strays) == 1 else 'channels'} {listed}: machine {machine.name!r} ({machine.source}) "
        f"{lacks} ({points}); "
        "diagnose the reading with the machine file it was taken on, correct the point in its sidecar, "
        "or leave the channel out (--channels)", path=reading.source)


def check_phase(reading, machine) -> None:
    """Raise ``ReadingError`` at the first 1X phase reading of ``reading`` that names no place of ``machine``
    (an unknown point or bearing, a bearing without a direction, a direction the point does not have)."""
    from ..machine.phase import phase_place

    for p in reading.phase_1x:
        place = phase_place(machine, p.point, p.direction)
        if isinstance(place, str):
            raise ReadingError(f"phase_1x: {place}", path=p.file, line=p.line)
