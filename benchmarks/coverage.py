"""Coverage of the reported k=2 intervals over many rendered scenes (see
tests/coverage_experiment.py for the experiment). Usage::

    .venv/bin/python benchmarks/coverage.py [N_TRIALS]

Prints, per figure, the share of trials whose error is within 2 reported sigmas and the width
ratio (1 / RMS of error/sigma: 1 when the intervals match the spread, > 1 too wide).
"""

from __future__ import annotations

import sys
import time
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parents[1] / "tests"))

import coverage_experiment as experiment  # noqa: E402


def main() -> None:
    n = int(sys.argv[1]) if len(sys.argv) > 1 else 300
    t0 = time.perf_counter()
    outcomes = []
    for i in range(n):
        outcomes.append(experiment.run_trial(i))
        if (i + 1) % 25 == 0:
            print(f"{i + 1}/{n} trials, {time.perf_counter() - t0:.0f} s", file=sys.stderr)
    cov = experiment.coverage(outcomes)
    width = experiment.width_ratio(outcomes)
    print(f"{n} trials in {time.perf_counter() - t0:.0f} s")
    print(f"{'figure':20s} {'coverage (k=2)':>15s} {'width ratio':>12s}")
    for f in experiment.FIGURES:
        print(f"{f:20s} {100 * cov[f][0]:14.1f}% {width[f]:12.2f}")
    hits = sum(c * m for c, m in cov.values())
    total = sum(m for _, m in cov.values())
    print(f"{'all figures':20s} {100 * hits / total:14.1f}%")


if __name__ == "__main__":
    main()
