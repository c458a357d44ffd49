"""Every source a shipped rulebook, policy or advice file cites is one a user can look up: the paper,
standard or handbook itself, never the project's private notes, which are not shipped."""

from __future__ import annotations

from engine.common.paths import RULEBOOKS


def test_no_shipped_source_cites_the_unshipped_check_values_notes():
    files = sorted(RULEBOOKS.rglob("*.yaml"))
    assert len(files) > 5                     # the folder was found: the check below can fail
    citing = [f"{f.relative_to(RULEBOOKS)}:{i}" for f in files
              for i, line in enumerate(f.read_text(encoding="utf-8").splitlines(), 1) if "check-values" in line]
    assert citing == [], f"cite the original source instead: {citing}"
