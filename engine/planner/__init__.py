"""Acquisition planning: the settings each point needs, what given settings cannot show, and proof.

``propose`` and ``check`` are plain functions of (machine, settings, policy)
returning plain dataclasses; ``prove`` simulates a fault, records it with
each setting and asks the real Reasoner whether a diagnosis of each record
names it (``shown``); ``build_plan`` composes them into the plan document.
"""

from .check import CAN, CANNOT, MAY_MISS, Limitation, Verdict, check, limitations_of_reading, reading_verdicts, verdicts
from .document import build_plan, render_plan
from .needs import Need, requirements
from .policy import Policy, load_policy, read_policy
from .proof import ProofItem, prove
from .propose import Proposal, propose
from .settings import Settings, given_settings, reading_settings
from .shown import Outcome, shown
from .targets import PURPOSE_TITLES, ROUTES, Target, purposes_at, targets_at

__all__ = ["CAN", "CANNOT", "MAY_MISS", "Limitation", "Need", "Outcome", "Policy", "PURPOSE_TITLES", "ProofItem",
           "Proposal", "ROUTES", "Settings", "Target", "Verdict", "build_plan", "check", "given_settings", "shown",
           "limitations_of_reading", "load_policy", "prove", "propose", "purposes_at", "read_policy",
           "reading_settings", "reading_verdicts", "render_plan", "requirements", "targets_at", "verdicts"]
