"""All the demo code: the invented Tallow Ridge Water Works, nowhere else in the engine.

- ``run``: ``tellwave demo``, every case of cases/demo/ simulated into files,
  diagnosed from them, one HTML report each and an index;
- ``plant``: ``tellwave demo-route``, monthly routes whose faults grow.

The package itself imports nothing heavy, so the command line can read the
demo's constants (``plant.MONTHS``) while building its help; ``run_demo`` is
looked up from ``run`` when first asked for.
"""

from __future__ import annotations


def __getattr__(name: str):
    if name in ("run_demo", "DemoResult", "DEMO_CASES", "summary"):
        from . import run
        return getattr(run, name)
    raise AttributeError(f"module {__name__!r} has no attribute {name!r}")
