"""Root test configuration: applies to tests/ and to the doctests in src/beamwall/."""

from __future__ import annotations

import numpy as np
import pytest


@pytest.fixture(autouse=True)
def _numpy_print_defaults():
    """Keep numpy's default printing: importing colour-science switches it to 1.13 style."""
    with np.printoptions(legacy=False):
        yield
