"""Where the shipped data folders are: rulebooks/, templates/ and cases/.

In a checkout (and an editable install) they sit beside the engine package;
a regular install puts them under ``<prefix>/share/tellwave`` (pyproject's
data-files). Every module asks here instead of guessing from its own path.
"""

from __future__ import annotations

import sys
from pathlib import Path


def _data_root() -> Path:
    checkout = Path(__file__).resolve().parent.parent
    if (checkout / "rulebooks").is_dir():
        return checkout
    return Path(sys.prefix) / "share" / "tellwave"


DATA_ROOT = _data_root()
RULEBOOKS = DATA_ROOT / "rulebooks"
TEMPLATES = DATA_ROOT / "templates"
CASES = DATA_ROOT / "cases"
