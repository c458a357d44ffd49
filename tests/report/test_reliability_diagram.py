"""The reliability diagram: one point per bin that holds a judged hypothesis, where the table puts it."""

from __future__ import annotations

import re

from engine.reasoning.learning import Reliability, ReliabilityBin
from engine.report.reliability import reliability_diagram


def _table(*bins):
    return Reliability(tuple(bins), 0.125, sum(b.count for b in bins), 0, 0)


def _points(svg_text):
    return [(float(x), float(y)) for x, y in re.findall(r'<circle cx="([\d.]+)" cy="([\d.]+)"', svg_text)]


def test_points_sit_where_the_table_says():
    table = _table(ReliabilityBin(0.0, 0.2, 0, None, None), ReliabilityBin(0.2, 0.4, 4, 0.3, 0.25),
                   ReliabilityBin(0.4, 0.6, 0, None, None), ReliabilityBin(0.6, 0.8, 0, None, None),
                   ReliabilityBin(0.8, 1.0, 10, 0.9, 0.9))
    text = reliability_diagram(table)
    points = _points(text)
    assert len(points) == 2                      # empty bins are left out
    (xa, ya), (xb, yb) = points
    assert xb > xa and yb < ya                   # higher certainty further right, more confirmed higher up (SVG y down)
    # on a well-calibrated bin the point lies on the diagonal: its pixel offsets from the origin scale alike
    origin_x, origin_y = 64, 300 - 40            # svg.MARGIN_LEFT, height - svg.MARGIN_BOTTOM
    assert abs((xb - origin_x) / 0.9 - (760 - 16 - 64)) < 1.0
    assert abs((origin_y - yb) / 0.9 - (origin_y - 26)) < 1.0
    # an over-confident bin (certainty 0.3, a quarter confirmed) lies below the diagonal, where the table says
    assert abs((xa - origin_x) / 0.3 - (760 - 16 - 64)) < 1.0
    assert abs((origin_y - ya) / 0.25 - (origin_y - 26)) < 1.0
    assert "(14 judged, Brier score 0.125)" in text


def test_an_empty_table_still_draws():
    text = reliability_diagram(Reliability(tuple(ReliabilityBin(i / 5, (i + 1) / 5, 0, None, None)
                                                 for i in range(5)), None, 0, 0, 0))
    assert _points(text) == [] and "no judged hypothesis" in text
