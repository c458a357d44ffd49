"""The reliability diagram of a site's judged diagnoses, drawn as SVG from the learning's table.

``engine.reasoning.learning.reliability`` gives, per certainty bin of the top
hypotheses, the mean certainty and the fraction confirmed at repair; a
well-calibrated rulebook puts each bin on the diagonal (certainty = fraction
confirmed). Bins without a judged hypothesis are left out. The counts per bin
are in the table, which a report shows beside the diagram (a bin of three
findings says little).
"""

from __future__ import annotations

import numpy as np

from ..reasoning.learning import Reliability
from . import svg


def reliability_diagram(table: Reliability, title: str = "Certainty against what was found at repair") -> str:
    """The diagram as an SVG element: the diagonal, and one point per bin that holds a judged hypothesis."""
    held = [(b.mean_certainty, b.fraction_confirmed) for b in table.bins
            if b.mean_certainty is not None and b.fraction_confirmed is not None]
    diagonal = svg.Series(np.array([0.0, 1.0]), np.array([0.0, 1.0]), color=svg.MUTED, dashed=True,
                          label="certainty = fraction confirmed (well calibrated)")
    series = [diagonal]
    if held:
        series.append(svg.Series(np.array([c for c, _ in held]), np.array([f for _, f in held]),
                                 color=svg.MARK, points=True, label="each certainty bin's judged hypotheses"))
    brier = "no judged hypothesis" if table.brier is None else f"Brier score {table.brier:.3f}"
    plot = svg.Plot(title=f"{title} ({table.judged} judged, {brier})", xlabel="certainty of the top hypothesis",
                    ylabel="fraction confirmed", series=series, xlim=(0.0, 1.0), ylim=(0.0, 1.0),
                    height=300)
    return svg.render(plot)
