"""tellwave: a second opinion on rotating-machinery vibration readings."""

__version__ = "0.1.0"

from .errors import (DataQualityWarning, MachineError, ReadingError, RulebookError,
                     TellwaveError, UsageError)
from .kinematics import ForcingFrequency, bearing_multiples, forcing_frequencies
from .machine import Machine, load_machine
from .readings import Reading, load_reading

__all__ = [
    "DataQualityWarning", "ForcingFrequency", "Machine", "MachineError", "Reading",
    "ReadingError", "RulebookError", "TellwaveError", "UsageError", "bearing_multiples",
    "forcing_frequencies", "load_machine", "load_reading",
]
