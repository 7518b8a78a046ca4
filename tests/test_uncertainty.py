"""Uncertainty: noise estimate, Monte Carlo propagation, and coverage against ground truth.

Outside checks: the Monte Carlo propagation of a single input through I = E d^2 matches the
GUM's first-order law (JCGM 100:2008, 5.1.2: u_rel(I) = 2 u_rel(d)); coverage of the k=2
intervals (JCGM 101:2008, 8: validation against known truth) over rendered scenes whose inputs
are drawn from the stated uncertainties (tests/coverage_experiment.py). The short run here
(15 scenes, 75 figure checks) asserts coverage of at least 85 % and intervals no wider than
twice the errors' spread; benchmarks/coverage.py runs 300 scenes (docs/uncertainty.md).
"""

from __future__ import annotations

import coverage_experiment as experiment
import numpy as np
import pytest

from beamwall.uncertainty import estimate_noise


def test_noise_model_recovers_shot_and_read_noise():
    rng = np.random.default_rng(3)
    truth = np.tile(np.linspace(5, 200, 600), (300, 1))
    var = 2.0 + 0.05 * truth  # read noise^2 + gain * signal
    raw = truth + rng.standard_normal(truth.shape) * np.sqrt(var)
    m = estimate_noise(raw, truth, sigma_cells=2.0, source_pixels_per_cell=1.0)
    assert m.a == pytest.approx(2.0, rel=0.15)
    assert m.b == pytest.approx(0.05, rel=0.1)
    # Gaussian kernel of s cells on independent cells: sqrt(sum w^2) = 1 / (2 sqrt(pi) s).
    assert m.smoothing_factor == pytest.approx(1 / (2 * np.sqrt(np.pi) * 2.0))


@pytest.fixture(scope="module")
def outcomes():
    return [experiment.run_trial(i, seed=11) for i in range(15)]


def test_coverage_of_k2_intervals(outcomes):
    cov = experiment.coverage(outcomes)
    hits = sum(c * n for c, n in cov.values())
    total = sum(n for _, n in cov.values())
    assert total >= 70
    assert hits / total >= 0.85, cov


def test_intervals_not_needlessly_wide(outcomes):
    width = experiment.width_ratio(outcomes)
    assert all(w < 2.0 for w in width.values()), width
