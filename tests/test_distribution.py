"""The distribution room against analytic beams.

Outside checks: a Gaussian beam exp(-theta^2 / (2 s^2)) has its 50 % points at
theta = s sqrt(2 ln 2) and its 10 % points at s sqrt(2 ln 10) (definition of the Gaussian;
the full width at half maximum 2 s sqrt(2 ln 2) is the textbook FWHM). The cos^3 law of a flat
wall E = I cos^3(theta) / d^2 (Ryer, *Light Measurement Handbook*, ch. 6). Tolerances: 0.5 %
on angles for noiseless grids of 2-5 mm cells; 1 % with 2 % per-cell noise.
"""

from __future__ import annotations

import numpy as np
import pytest
from conftest import analytic_grid

from beamwall.distribution import (
    find_axis,
    intensity_map,
    outermost_crossing_deg,
    polar_distribution,
    smooth_nan,
)
from beamwall.figures import angle_summary


def gaussian(s_deg, peak=1000.0):
    return lambda t, p: peak * np.exp(-0.5 * (t / s_deg) ** 2)


@pytest.mark.parametrize("s_deg,d,step", [(2.0, 3.0, 1.0), (12.0, 2.0, 4.0), (25.0, 1.5, 5.0)])
def test_gaussian_beam_and_field_angle(s_deg, d, step):
    half = d * 1000 * np.tan(np.radians(min(4.5 * s_deg, 80)))
    grid = analytic_grid(gaussian(s_deg), distance_m=d, half_width_mm=half, step_mm=step)
    im = intensity_map(grid, axis_mm=(0.0, 0.0), distance_m=d)
    dist = polar_distribution(im, axis_mm=(0.0, 0.0), distance_m=d, unit="cd")
    beam = angle_summary(dist.beam_half_angle_deg)
    field = angle_summary(dist.field_half_angle_deg)
    # Gaussian: 50 % at s sqrt(2 ln 2), 10 % at s sqrt(2 ln 10) (full angles twice that).
    assert beam.mean_deg == pytest.approx(2 * s_deg * np.sqrt(2 * np.log(2)), rel=5e-3)
    assert field.mean_deg == pytest.approx(2 * s_deg * np.sqrt(2 * np.log(10)), rel=5e-3)
    assert dist.peak == pytest.approx(1000.0, rel=5e-3)


def test_intensity_map_undoes_cos3():
    # A uniform 100 cd source: E falls as cos^3 on the wall (Ryer), I must come back flat.
    grid = analytic_grid(lambda t, p: np.full_like(t, 100.0), distance_m=1.0,
                         half_width_mm=1500.0, step_mm=25.0)
    im = intensity_map(grid, axis_mm=(0.0, 0.0), distance_m=1.0)
    assert np.allclose(im.values, 100.0, rtol=1e-4)
    corner_cos = 1000.0 / np.sqrt(1000.0**2 + 2 * 1500.0**2)
    assert grid.values[0, 0] == pytest.approx(100.0 * corner_cos**3, rel=1e-4)


def test_find_axis_off_centre_and_noisy():
    axis = (120.0, -80.0)
    grid = analytic_grid(gaussian(6.0), distance_m=2.0, half_width_mm=900.0, step_mm=3.0,
                         axis_mm=axis, noise_fraction=0.02, seed=3)
    found = find_axis(grid, distance_m=2.0)
    assert np.hypot(found[0] - axis[0], found[1] - axis[1]) < 1.0


def ring(t, p):
    # Dark centre, peak on a ring at 8 deg, falling outside: a zoom head's donut.
    return 1000.0 * np.exp(-0.5 * ((t - 8.0) / 3.0) ** 2)


def test_ring_beam_outermost_crossing_and_centre():
    d = 2.0
    grid = analytic_grid(ring, distance_m=d, half_width_mm=800.0, step_mm=2.0,
                         axis_mm=(30.0, 20.0))
    axis = find_axis(grid, distance_m=d)
    assert np.hypot(axis[0] - 30.0, axis[1] - 20.0) < 1.0
    im = intensity_map(grid, axis_mm=axis, distance_m=d)
    dist = polar_distribution(im, axis_mm=axis, distance_m=d, unit="cd")
    # Outermost 50 % crossing: 8 + 3 sqrt(2 ln 2) deg (the inner crossing is ignored).
    beam = angle_summary(dist.beam_half_angle_deg)
    assert beam.mean_deg == pytest.approx(2 * (8.0 + 3.0 * np.sqrt(2 * np.log(2))), rel=5e-3)
    assert dist.peak == pytest.approx(1000.0, rel=5e-3)


def test_noisy_peak_not_biased_by_single_pixels():
    grid = analytic_grid(gaussian(10.0), distance_m=2.0, half_width_mm=1500.0, step_mm=3.0,
                         noise_fraction=0.05, seed=7)
    im = intensity_map(grid, axis_mm=(0.0, 0.0), distance_m=2.0)
    dist = polar_distribution(im, axis_mm=(0.0, 0.0), distance_m=2.0, unit="cd")
    assert float(np.nanmax(im.values)) > 1100.0  # the single-pixel maximum is biased ...
    assert dist.peak == pytest.approx(1000.0, rel=0.01)  # ... the estimate is not
    beam = angle_summary(dist.beam_half_angle_deg)
    assert beam.mean_deg == pytest.approx(20 * np.sqrt(2 * np.log(2)), rel=0.01)


def test_crossing_outside_photo_is_nan():
    t = np.linspace(0, 10, 11)
    prof = np.ones((11, 1))
    prof[6:] = np.nan  # measured range ends while still bright
    assert np.isnan(outermost_crossing_deg(t, prof, 0.5)[0])


def test_smooth_nan_keeps_mean_and_nan():
    rng = np.random.default_rng(0)
    v = (1.0 + 0.1 * rng.standard_normal((200, 200))).astype(np.float32)
    v[50:60, 50:60] = np.nan
    s = smooth_nan(v, 2.0)
    assert np.isnan(s[55, 55])
    assert np.nanmean(s) == pytest.approx(np.nanmean(v), abs=2e-3)
    assert np.nanstd(s) < 0.1 * 0.3
