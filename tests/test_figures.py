"""Figures against outside formulas.

Sources: ANSI/PLATO FL 1 (throw = sqrt(I / 0.25 lx), worked example 10 000 cd -> 200 m);
the uniform-cone flux 2 pi I (1 - cos alpha) (any photometry handbook, e.g. Ryer, *Light
Measurement Handbook*, ch. 6). Grids here are analytic illuminance maps, so tolerances are
those of the wall-grid quadrature only (stated beside each check).
"""

from __future__ import annotations

import numpy as np
import pytest
from conftest import analytic_grid

from beamwall.figures import (
    angle_summary,
    cumulative_cone_flux,
    largest_cone_half_angle_deg,
    saturated_fraction,
    throw_m,
)


def test_throw_fl1_worked_examples():
    # ANSI/PLATO FL1 beam distance: 10 000 cd -> 200 m (2 sqrt(I)).
    assert throw_m(10_000.0) == pytest.approx(200.0)
    # Definition: at the throw distance the peak intensity gives exactly 0.25 lx (E = I / d^2).
    for i_cd in (37.0, 4000.0, 1.2e5):
        assert i_cd / throw_m(i_cd) ** 2 == pytest.approx(0.25)


@pytest.mark.parametrize("alpha_deg", [5.0, 20.0, 40.0])
def test_uniform_cone_flux(alpha_deg):
    # Photometry handbook: a uniform intensity I sends 2 pi I (1 - cos alpha) lm into a cone.
    i_cd = 500.0
    d = 2.0
    grid = analytic_grid(lambda t, p: np.full_like(t, i_cd), distance_m=d,
                         half_width_mm=2000.0, step_mm=4.0)
    cone, flux = cumulative_cone_flux(grid, axis_mm=(0.0, 0.0), distance_m=d,
                                      max_half_angle_deg=alpha_deg)
    expected = 2 * np.pi * i_cd * (1 - np.cos(np.radians(alpha_deg)))
    assert cone[-1] == pytest.approx(alpha_deg)
    # Cells counted whole at their centre: 0.5 % for a 4 mm grid on these circles.
    assert flux[-1] == pytest.approx(expected, rel=5e-3)
    assert np.all(np.diff(flux) >= 0)


def test_cone_flux_ignores_light_outside_the_cone():
    grid = analytic_grid(lambda t, p: np.where(t < 10.0, 100.0, 1e6), distance_m=1.0,
                         half_width_mm=400.0, step_mm=1.0)
    _, flux = cumulative_cone_flux(grid, axis_mm=(0.0, 0.0), distance_m=1.0,
                                   max_half_angle_deg=9.0)
    assert flux[-1] == pytest.approx(2 * np.pi * 100 * (1 - np.cos(np.radians(9.0))), rel=5e-3)


def test_largest_cone_rounds_down_to_tenth():
    # atan(0.5) = 26.565 deg -> 26.5
    assert largest_cone_half_angle_deg(500.0, distance_m=1.0) == pytest.approx(26.5)
    assert largest_cone_half_angle_deg(-3.0, distance_m=1.0) == 0.0


def test_angle_summary_all_missing():
    s = angle_summary(np.full(8, np.nan))
    assert s.mean_deg is None and s.found_fraction == 0.0


def test_saturated_fraction_of_field_region():
    grid = analytic_grid(lambda t, p: 100 * np.exp(-0.5 * (t / 5.0) ** 2), distance_m=1.0,
                         half_width_mm=300.0, step_mm=2.0)
    from dataclasses import replace

    g2 = replace(grid, saturated=grid.values > 90.0)
    frac = saturated_fraction(g2, peak=100.0)
    inside_field = (grid.values >= 10.0).sum()
    assert frac == pytest.approx((grid.values > 90.0).sum() / inside_field, rel=0.05)


def test_total_flux_upper_bound_is_exact_for_a_uniform_source():
    # Uniform I: cone 2 pi I (1 - cos a) plus annulus 2 pi I cos a = 2 pi I, the hemisphere's
    # flux (photometry handbook, uniform-cone formula).
    from beamwall.figures import total_flux_upper_bound

    i_cd, a = 500.0, 40.0
    cone = 2 * np.pi * i_cd * (1 - np.cos(np.radians(a)))
    assert total_flux_upper_bound(cone, i_cd, half_angle_deg=a) == pytest.approx(
        2 * np.pi * i_cd)
