"""The machine: its YAML description loaded and checked (``model``), every rate its geometry implies
(``kinematics``, the only module that derives a rate), and the site's alarm limits per point
(``alarms``, whose bands are resolved through kinematics)."""

from .alarms import with_file_alarms
from .model import (
    COUPLING_TYPES,
    Bearing,
    Coupling,
    GearMesh,
    Machine,
    Motor,
    Point,
    SpeedRange,
    check_speed_rpm,
    points_across,
    read_machine,
)

__all__ = ["COUPLING_TYPES", "Bearing", "Coupling", "GearMesh", "Machine", "Motor", "Point", "SpeedRange",
           "check_speed_rpm", "load_machine", "points_across"]


def load_machine(path) -> Machine:
    """Read and check a machine YAML file, with the alarms its ``alarms:`` section sets."""
    return with_file_alarms(*read_machine(path))
