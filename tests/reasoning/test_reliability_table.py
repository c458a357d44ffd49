"""The reliability table's arithmetic (bench.reliability), on answers whose score is known."""

from __future__ import annotations

from bench.reliability import Answer, table


def test_brier_score_and_calls():
    # Brier (1950): mean of (forecast - outcome)^2; a sure right answer scores 0, a 50 % guess 0.25
    answers = [Answer("t", "a", 1.0, True, False), Answer("t", "b", 0.5, False, False),
               Answer("t", "c", 0.8, False, False), Answer("t", "d", 0.0, False, True)]
    lines = table(answers)
    brier = (0.0 + 0.25 + 0.64 + 0.0) / 4
    assert f"Brier score {brier:.3f} over 4 readings (1 withheld)" in lines
    assert any(line.startswith("calls at 50 % or more: 3, right 1 (33.3 %), wrong 2") for line in lines)


def test_bins_hold_every_answer_once():
    answers = [Answer("t", str(i), c, c > 0.6, False) for i, c in enumerate((0.1, 0.3, 0.55, 0.75, 0.9, 1.0))]
    counts = [int(line.split()[1]) for line in table(answers)[1:6]]
    assert counts == [1, 1, 1, 1, 2]
