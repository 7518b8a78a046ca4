"""Time ``write_html`` on a synthetic 10-shot session (target: under 10 s on 2 cores).

Run: ``.venv/bin/python benchmarks/bench_report.py``. The shots are the tests' fictional
Gaussian beams (``tests/_report_fixtures.py``): 0.5 deg x 5 deg polar grids to 40 deg and
3 m x 3 m wall maps at 10 mm (301 x 301), with zoom, mode, electrical and claim sections.
"""

from __future__ import annotations

import sys
import tempfile
import time
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parents[1] / "tests"))

from _report_fixtures import zoom_session  # noqa: E402

from beamwall.report import write_csv, write_html, write_ies  # noqa: E402


def main(n_shots: int = 10, repeats: int = 3) -> None:
    session = zoom_session(n_shots)
    with tempfile.TemporaryDirectory() as tmp:
        times, cpu = [], []
        for _ in range(repeats):
            start, start_cpu = time.perf_counter(), time.process_time()
            path = write_html(session, Path(tmp) / "report.html")
            times.append(time.perf_counter() - start)
            cpu.append(time.process_time() - start_cpu)
        size_kb = path.stat().st_size / 1024
        start = time.perf_counter()
        write_csv(session, Path(tmp) / "figures.csv")
        for k, shot in enumerate(session.shots):
            write_ies(shot, Path(tmp) / f"{k}.ies", issue_date="2024-05-01")
        other = time.perf_counter() - start
    print(f"write_html, {n_shots} shots: best {min(times):.2f} s, worst {max(times):.2f} s "
          f"over {repeats} runs (first run includes matplotlib's warm-up); CPU best "
          f"{min(cpu):.2f} s; "
          f"report {size_kb:.0f} KiB")
    print(f"write_csv + {n_shots} x write_ies: {other:.2f} s")


if __name__ == "__main__":
    main()
