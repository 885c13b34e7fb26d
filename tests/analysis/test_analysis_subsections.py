"""The analysis's subsections before any water level is known, and the overbanks' n."""

from __future__ import annotations

import math

import pytest
from stakeline.analysis import AnalysisOptions, analyse_visit
from stakeline.errors import SurveyError

# Two 20-wide flood plains 2 above a 10-wide main channel, bank tops coded (stations in m).
GROUND = [(0, 4, ""), (0, 2, ""), (20, 2, "bank_top"), (20, 0, ""), (30, 0, ""),
          (30, 2, "bank_top"), (50, 2, ""), (50, 4, "")]  # fmt: skip
STATIONS = [{"station": x, "elevation": z, "code": c} for x, z, c in GROUND]


def test_rating_with_subsections_needs_no_water_level():
    # The rating table is about every level; a visit with no water level read still has one.
    result = analyse_visit({"unit": "m"}, STATIONS, AnalysisOptions(n=0.03, n_overbank=0.05,
                                                                   slope=0.001))  # fmt: skip
    assert result.stage is None and result.splits == [20.0, 30.0]
    assert result.n_values == [0.05, 0.03, 0.05]
    # At the top row (stage 4): divided-channel method (Chow 1959, sec. 6-7), closed form:
    # flood plains 20 x 2 with P = 20 + 2 (outer wall), main channel 10 x 4 with P = 10 + 2*2.
    top = list(result.rating["stage"]).index(4.0)
    plain = 1 / 0.05 * 40.0 * (40.0 / 22.0) ** (2 / 3)
    main = 1 / 0.03 * 40.0 * (40.0 / 14.0) ** (2 / 3)
    q = (2 * plain + main) * math.sqrt(0.001)
    assert result.rating["discharge"][top] == pytest.approx(q, rel=1e-12)


@pytest.mark.parametrize("value", [0, -0.02, float("nan"), "abc"])
def test_the_overbanks_n_is_checked_and_named(value):
    with pytest.raises(SurveyError, match="n of the overbanks"):
        analyse_visit({"unit": "m"}, STATIONS, AnalysisOptions(n=0.03, n_overbank=value,
                                                               slope=0.001))  # fmt: skip
