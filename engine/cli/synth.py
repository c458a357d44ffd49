"""``tellwave synth``: a simulated reading of a machine with a known fault."""

from __future__ import annotations

from ._common import RPM, number, say, whole

MAX_SYNTH_SAMPLES = 1 << 24     # per channel: 10 min at 25.6 kHz


def _fault(name: str) -> str:
    """A fault of the simulator's table; else the table's own one-line error, as argparse shows it."""
    import argparse

    from ..common.errors import UsageError
    from ..simulation import fault_of

    try:
        fault_of(name)
    except UsageError as e:
        raise argparse.ArgumentTypeError(e.problem) from None
    return name


def register(sub) -> None:
    """Add ``tellwave synth`` and its options."""
    p = sub.add_parser("synth", help="simulate a reading of a machine with a known fault")
    from ..simulation import FAULTS  # after add_parser: ``tellwave --help`` only lists the command

    p.add_argument("machine", help="machine YAML file")
    p.add_argument("--fault", default="healthy", type=_fault, metavar="FAULT",
                   help="fault to simulate (default healthy): " + ", ".join(FAULTS))
    p.add_argument("--component", help="faulty shaft, bearing, gear mesh, belt, rotor or motor id "
                                       "(default: the first of its kind)")
    p.add_argument("--stage", type=int, default=2, choices=[1, 2, 3, 4],
                   help="damage stage, 1 incipient to 4 severe (default 2)")
    p.add_argument("--rpm", type=RPM, help="speed of the driving shaft (default: nominal)")
    p.add_argument("--sample-rate", type=number("the sample rate in Hz", 100.0, 1e6, low_inclusive=True),
                   default=25600.0, help="Hz, 100 to 1 000 000 (default 25600)")
    p.add_argument("--duration", type=number("the duration in s", 0.0, 600.0), default=4.0,
                   help="seconds, up to 600 (default 4)")
    p.add_argument("--seed", type=whole("--seed", 0), default=0,
                   help="random seed; the same seed gives the same reading (default 0)")
    p.add_argument("--points", help="comma-separated measurement points (default: all)")
    p.add_argument("-o", "--output", required=True, help="reading file to write (.wav, .npz or .csv)")
    p.set_defaults(run=run)


def run(args) -> int:
    """Write a simulated reading with its sidecar and truth file; the exit code."""
    from ..common.errors import UsageError
    from ..machine import load_machine
    from ..simulation import simulate, write_simulation
    from ._common import output_target

    inputs = output_target(args, args.output)      # before the work
    if args.duration * args.sample_rate > MAX_SYNTH_SAMPLES:
        raise UsageError(f"--duration x --sample-rate gives more than {MAX_SYNTH_SAMPLES} samples per channel")
    if args.duration * args.sample_rate < 256:
        raise UsageError("--duration x --sample-rate gives fewer than 256 samples, too few to analyse")
    machine = load_machine(args.machine)
    points = [p.strip() for p in args.points.split(",") if p.strip()] if args.points else None
    sim = simulate(machine, args.fault, args.component, args.stage, args.rpm, args.sample_rate,
                   args.duration, args.seed, points)
    for path in write_simulation(sim, args.output, inputs=inputs):
        say(f"wrote {path}")
    return 0
