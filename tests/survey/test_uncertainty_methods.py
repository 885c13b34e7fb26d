"""The two ways of finding a ± band agree: chunked Monte Carlo and first-order propagation with
exact sensitivities (JCGM 100:2008 eq. 10 and JCGM 101:2008, from memory), within the Monte
Carlo sampling error computed here."""

from __future__ import annotations

import math

import numpy as np
import pytest
from stakeline.survey import uncertainty
from stakeline.survey.geometry import Section
from stakeline.survey.uncertainty import (
    Precision,
    discharge_band,
    geometry_bands,
    method_for,
)


def smooth_channel() -> tuple[Section, float]:
    """A parabolic channel read every 0.5 m, with no point within 4 cm of the water level (the
    first-order law is exact away from the kinks where a point crosses the water)."""
    x = np.linspace(0.0, 12.0, 25)
    z = 100.0 + 0.06 * (x - 6.0) ** 2
    stage = 101.0
    assert np.min(np.abs(z - stage)) > 0.04
    return Section(x, z), stage


@pytest.mark.parametrize("precision", [Precision(0.005, 0.010), Precision(0.01, 0.0)])
def test_monte_carlo_and_first_order_agree_within_sampling_error(precision):
    section, stage = smooth_channel()
    draws = 20_000
    mc = geometry_bands(section, stage, precision, method="monte-carlo", draws=draws)
    first = geometry_bands(section, stage, precision, method="linear")
    # The standard deviation of N normal samples has a relative standard error of
    # 1/sqrt(2(N - 1)) (a standard result for the sample variance, from memory).
    relative_error = 1 / math.sqrt(2 * (draws - 1))
    for name in ("area", "wetted_perimeter", "top_width", "hydraulic_radius"):
        expected = first[name].plus_minus
        assert mc[name].plus_minus == pytest.approx(expected, rel=4 * relative_error), name
        assert mc[name].value == first[name].value  # the central value is the survey as read
    q_mc = discharge_band(section, stage, 0.035, 0.002, "m", precision, draws=draws,
                          method="monte-carlo")  # fmt: skip
    q_first = discharge_band(section, stage, 0.035, 0.002, "m", precision, method="linear")
    assert q_mc.plus_minus == pytest.approx(q_first.plus_minus, rel=4 * relative_error)


def test_chunking_does_not_change_the_draws_seen(monkeypatch):
    # The same seed gives the same band whatever the chunk size, as long as the chunks split
    # the draws the same way; a smaller chunk only changes how many are measured at once.
    section, stage = smooth_channel()
    p = Precision(0.005, 0.01)
    whole = geometry_bands(section, stage, p, method="monte-carlo", draws=400)
    again = geometry_bands(section, stage, p, method="monte-carlo", draws=400)
    assert whole == again
    monkeypatch.setattr(uncertainty, "CHUNK", section.stations.size * 7)  # 7 draws at a time
    chunked = geometry_bands(section, stage, p, method="monte-carlo", draws=400)
    for name, band in chunked.items():
        assert band.plus_minus == pytest.approx(whole[name].plus_minus, rel=0.25)


def test_auto_takes_first_order_for_large_sections():
    small = Section(np.linspace(0, 10, 50), np.r_[2.0, np.zeros(48), 2.0])
    large = Section(np.linspace(0, 100, 5000), np.r_[2.0, np.zeros(4998), 2.0])
    assert method_for(small) == "monte-carlo" and method_for(large) == "linear"
    with pytest.raises(ValueError, match="uncertainty method"):
        method_for(small, "bootstrap")


def test_first_order_is_linear_in_the_precision():
    # u scales with σ (JCGM 100:2008 eq. 10): doubling both precisions doubles every band.
    section, stage = smooth_channel()
    one = geometry_bands(section, stage, Precision(0.005, 0.01), method="linear")
    two = geometry_bands(section, stage, Precision(0.01, 0.02), method="linear")
    for name, band in one.items():
        assert two[name].plus_minus == pytest.approx(2 * band.plus_minus, rel=1e-12)
