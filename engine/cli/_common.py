"""What several commands share: the parser class, reading options, rulebook loading."""

from __future__ import annotations

import argparse

from ..errors import UsageError


class Parser(argparse.ArgumentParser):
    def error(self, message):  # one line and exit code 2, like every other user error
        raise UsageError(message)


UNITS_HELP = "g, m/s^2, mm/s, m/s, in/s, um, mm, mils"


def add_reading_options(p) -> None:
    p.add_argument("--sample-rate", type=float, help="sample rate in Hz, if the file does not state it")
    p.add_argument("--unit", help=f"engineering unit of the samples ({UNITS_HELP})")
    p.add_argument("--scale", type=float, help="engineering units at digital full scale (WAV)")
    p.add_argument("--point", help="measurement point id")
    p.add_argument("--direction", choices=["horizontal", "vertical", "axial"],
                   help="sensor direction, if neither the file nor its sidecar says")
    p.add_argument("--rpm", type=float, help="measured running speed")


def add_site_option(p) -> None:
    p.add_argument("--site", action="append", metavar="FOLDER",
                   help="site rulebook folder or file laid over the shipped ones (repeatable)")


def reading_options(args) -> dict:
    return dict(sample_rate_hz=args.sample_rate, unit=args.unit, scale=args.scale,
                point=args.point, direction=args.direction, speed_rpm=args.rpm)


def load_readings(args):
    """The reading files of ``args.readings`` taken together as one Reading."""
    from ..readings import combine_readings, load_reading

    options = reading_options(args)
    if getattr(args, "channels", None):
        options["channels"] = [c.strip() for c in args.channels.split(",") if c.strip()]
    return combine_readings([load_reading(path, **options) for path in args.readings])


def rulebook(args):
    from ..reasoning import load_rulebook

    return load_rulebook(*(args.site or []))
