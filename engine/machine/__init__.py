"""The machine: its YAML description loaded and checked (``model``), and every rate its
geometry implies (``kinematics``, the only module that derives a rate)."""

from .model import Bearing, GearMesh, Machine, Motor, Point, SpeedRange, check_speed_rpm, load_machine

__all__ = ["Bearing", "GearMesh", "Machine", "Motor", "Point", "SpeedRange", "check_speed_rpm", "load_machine"]
