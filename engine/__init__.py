"""tellwave: a second opinion on rotating-machinery vibration readings.

The public names are loaded on first use, so that ``tellwave --help`` does not
pay for numpy and scipy.
"""

__version__ = "0.2.0"

_EXPORTS = {
    "DataQualityWarning": "common.errors", "MachineError": "common.errors", "OutputError": "common.errors",
    "ReadingError": "common.errors", "RulebookError": "common.errors", "TellwaveError": "common.errors",
    "UsageError": "common.errors", "ReasoningError": "common.errors",
    "ForcingFrequency": "machine.kinematics", "bearing_multiples": "machine.kinematics",
    "forcing_frequencies": "machine.kinematics",
    "Machine": "machine", "load_machine": "machine",
    "Reading": "readings", "load_reading": "readings",
    "load_rulebook": "reasoning", "Reasoner": "reasoning",
    "diagnose": "pipeline",
}

__all__ = sorted(_EXPORTS)


def __getattr__(name):
    if name not in _EXPORTS:
        raise AttributeError(f"module 'engine' has no attribute {name!r}")
    from importlib import import_module

    value = getattr(import_module(f".{_EXPORTS[name]}", __name__), name)
    globals()[name] = value
    return value
