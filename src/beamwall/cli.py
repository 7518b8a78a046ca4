"""The ``beamwall`` command: parse, call the pipeline, print tables and progress, exit.

Exit status: 0 on success; 2 on a usage or input error, with a one-line reason on stderr naming
the file and the field at fault. Only errors of the :class:`beamwall.errors.BeamwallError`
family are caught; anything else is a bug and keeps its traceback.
"""

from __future__ import annotations

import os
import shutil
import sys
import tempfile
from collections.abc import Callable, Iterator
from contextlib import contextmanager
from pathlib import Path
from typing import Any, TypeVar

import click

from beamwall import __version__
from beamwall.cli_check import check
from beamwall.cli_power import power
from beamwall.cli_profile import profile
from beamwall.cli_target import target
from beamwall.errors import BeamwallError, InputError

F = TypeVar("F", bound=Callable[..., Any])

CAUTION = (
    "Caution: never look into the beam or aim it at eyes, drivers or aircraft; handle Li-ion "
    "cells as their maker says (no damaged wraps, a proper charger). Follow local rules."
)


def _fail(exc: BeamwallError) -> None:
    click.echo(f"beamwall: error: {exc}", err=True)
    sys.exit(2)


def _guard(fn: F) -> F:
    """Turn a BeamwallError into its one-line message and exit status 2."""
    import functools

    @functools.wraps(fn)
    def wrapper(*args: Any, **kwargs: Any) -> Any:
        try:
            return fn(*args, **kwargs)
        except BeamwallError as exc:
            _fail(exc)

    return wrapper  # type: ignore[return-value]


@contextmanager
def _progress(label: str) -> Iterator[Callable[[str, int, int], None]]:
    """A progress bar on stderr, one update per shot (only on a terminal)."""
    state: dict[str, Any] = {"bar": None}
    interactive = sys.stderr.isatty()

    def update(stage: str, done: int, total: int) -> None:
        if not interactive:
            return
        if state["bar"] is None:
            state["bar"] = click.progressbar(
                length=total, label=label, file=sys.stderr, show_pos=True,
                item_show_func=lambda s: s,
            )
            state["bar"].__enter__()  # type: ignore[attr-defined]
            state["done"] = 0
        bar = state["bar"]
        step = done - state["done"]
        state["done"] = done
        bar.update(step, stage)

    try:
        yield update
    finally:
        if state["bar"] is not None:
            state["bar"].__exit__(None, None, None)


def _check_new(path: Path, force: bool, what: str) -> None:
    if path.exists() and not force:
        raise InputError(f"{what} exists; use --force to overwrite it", file=path)


def _atomic_write(path: Path, write: Callable[[Path], Any]) -> None:
    """Write through a temporary file in the same folder, then rename: nothing half-written."""
    path.parent.mkdir(parents=True, exist_ok=True)
    fd, tmp = tempfile.mkstemp(prefix=f".{path.name}.", dir=path.parent)
    os.close(fd)
    try:
        write(Path(tmp))
        os.replace(tmp, path)
    finally:
        if os.path.exists(tmp):
            os.unlink(tmp)


def _fmt(v: float | None, digits: int = 1, sigma: float | None = None) -> str:
    if v is None:
        return "-"
    s = f"{v:.{digits}f}"
    if sigma is not None:
        s += f" ± {sigma:.{digits}f}"
    return s


def _sig(v: float | None) -> int:
    """Decimals for a figure: three significant digits at least, none below 1 for large."""
    if v is None or v == 0:
        return 1
    import math

    return max(0, 2 - int(math.floor(math.log10(abs(v)))))


def format_table(result: Any) -> str:
    """The figures as a plain-text table."""
    rows = [("shot", "beam °", "field °", "peak cd", "throw m", "flux lm (cone °)")]
    for s in result.shots:
        flux = "-"
        if s.flux_lm is not None:
            flux_text = _fmt(s.flux_lm, _sig(s.flux_lm), s.flux_sigma_lm)
            flux = f"{flux_text} ({s.flux_half_angle_deg:g})"
        elif s.relative_flux is not None:
            flux = f"x{s.relative_flux:.3f} rel."
        peak = (
            _fmt(s.peak_intensity_cd, _sig(s.peak_intensity_cd), s.peak_intensity_sigma_cd)
            if s.peak_intensity_cd is not None
            else f"x{s.relative_peak_intensity:.3f} rel."
        )
        rows.append((
            s.label,
            _fmt(s.beam_angle_deg, 1 if (s.beam_angle_deg or 0) >= 10 else 2,
                 s.beam_angle_sigma_deg),
            _fmt(s.field_angle_deg, 1 if (s.field_angle_deg or 0) >= 10 else 2,
                 s.field_angle_sigma_deg),
            peak,
            _fmt(s.throw_m, _sig(s.throw_m), s.throw_sigma_m),
            flux,
        ))
    widths = [max(len(r[i]) for r in rows) for i in range(len(rows[0]))]
    lines = []
    for j, r in enumerate(rows):
        cells = [r[0].ljust(widths[0])] + [c.rjust(w) for c, w in zip(r[1:], widths[1:])]
        lines.append("  ".join(cells))
        if j == 0:
            lines.append("  ".join("-" * w for w in widths))
    return "\n".join(lines)


@click.group(context_settings={"help_option_names": ["-h", "--help"]})
@click.version_option(__version__, prog_name="beamwall")
def main() -> None:
    """Measure a torch's beam from calibrated photos of it on a wall.

    Beam angle (50 %), field angle (10 %), peak intensity (cd), throw (0.25 lx), flux in a
    stated cone. Start with `beamwall demo`; see the README for how to take the photos.
    """


@main.command()
@click.argument("calibration_toml", type=click.Path(dir_okay=False, path_type=Path))
@click.option("-o", "--output", "output", required=True,
              type=click.Path(dir_okay=False, path_type=Path),
              help="Calibration file to write, e.g. calibration/NAME.json.")
@click.option("--force", is_flag=True, help="Overwrite an existing calibration file.")
@_guard
def calibrate(calibration_toml: Path, output: Path, force: bool) -> None:
    """Make a camera calibration from a reference photo (lamp of known cd, or a lux reading)."""
    from beamwall.pipeline import calibrate_session
    from beamwall.report.jsonfile import write_calibration
    from beamwall.session import load_calibration_session

    _check_new(output, force, "calibration file")
    cs = load_calibration_session(calibration_toml)
    with _progress("calibrating") as progress:
        cal = calibrate_session(cs, progress=progress)
    _atomic_write(output, lambda p: write_calibration(cal, p))
    click.echo(
        f"calibration: {cal.lux_per_signal:.6g} lx per signal unit "
        f"± {100 * cal.relative_sigma:.1f} % (k=1), {cal.encoding}, "
        f"{cal.camera_make or '?'} {cal.camera_model or ''}".rstrip()
    )
    for w in cal.warnings:
        click.echo(f"warning: {w}", err=True)
    click.echo(f"wrote {output}")


def run_measure(
    session_toml: Path, outdir: Path, *, calibration: Path | None, force: bool,
    uncertainty: bool = True,
) -> Any:
    """Measure a session and write its outputs into ``outdir``; return the SessionResult."""
    from beamwall.pipeline import measure_session
    from beamwall.report.jsonfile import read_calibration, write_results
    from beamwall.session import load_session

    results_path = outdir / "results.json"
    _check_new(results_path, force, "results")
    session = load_session(session_toml)
    cal_path = calibration or session.calibration_file
    cal = read_calibration(cal_path) if cal_path is not None else None
    with _progress("measuring") as progress:
        result = measure_session(
            session, cal, force=force, progress=progress,
            calibration_file=None if cal_path is None else str(cal_path),
            uncertainty=uncertainty,
        )
    outdir.mkdir(parents=True, exist_ok=True)
    _write_extras(result, outdir)
    _atomic_write(results_path, lambda p: write_results(result, p))
    return result


def _write_extras(result: Any, outdir: Path) -> None:
    """The report, CSV and LM-63 files, where the report package provides them."""
    from beamwall.report import ies_slug, ies_text, write_csv, write_html

    _atomic_write(outdir / "figures.csv", lambda p: write_csv(result, p))
    for shot in result.shots:
        text = ies_text(shot)
        if text is not None:
            data = text.encode("ascii")
            _atomic_write(outdir / (ies_slug(shot.label) + ".ies"),
                          lambda p, b=data: p.write_bytes(b))  # type: ignore[misc]
    _atomic_write(outdir / "report.html", lambda p: write_html(result, p))


def _print_result(result: Any, outdir: Path) -> None:
    click.echo(format_table(result))
    if not result.calibrated:
        click.echo("(no calibration: angles and figures relative to the first shot only)")
    for s in result.shots:
        for w in s.warnings:
            click.echo(f"warning: {s.label}: {w}", err=True)
    for w in result.warnings:
        click.echo(f"warning: {w}", err=True)
    click.echo(f"wrote {outdir / 'results.json'}")
    extras = [p.name for p in (outdir / "report.html", outdir / "figures.csv") if p.exists()]
    n_ies = len(list(outdir.glob("*.ies")))
    if extras or n_ies:
        listed = ", ".join(extras + ([f"{n_ies} IES LM-63 files"] if n_ies else []))
        click.echo(f"      {listed} (open {outdir / 'report.html'} in a browser)")


@main.command()
@click.argument("session_toml", type=click.Path(dir_okay=False, path_type=Path))
@click.option("-o", "--output", "outdir", required=True,
              type=click.Path(file_okay=False, path_type=Path),
              help="Folder for results.json and the other outputs.")
@click.option("-c", "--calibration", type=click.Path(dir_okay=False, path_type=Path),
              default=None, help="Calibration JSON (overrides the session's [calibration]).")
@click.option("--force", is_flag=True,
              help="Overwrite existing outputs; apply a calibration made for another camera.")
@click.option("--no-uncertainty", is_flag=True,
              help="Skip the Monte Carlo uncertainty (faster): the sigmas are then a "
                   "first-order estimate from the calibration and the distances only.")
@_guard
def measure(session_toml: Path, outdir: Path, calibration: Path | None, force: bool,
            no_uncertainty: bool) -> None:
    """Measure every shot of a session: angles, peak cd, throw, flux, with uncertainties."""
    result = run_measure(session_toml, outdir, calibration=calibration, force=force,
                         uncertainty=not no_uncertainty)
    _print_result(result, outdir)
    click.echo(CAUTION, err=True)


@main.command()
@click.option("-o", "--output", "outdir", type=click.Path(file_okay=False, path_type=Path),
              default=None, help="Folder for the rendered scene and results (default: temp).")
@click.option("--force", is_flag=True, help="Overwrite an existing demo folder's outputs.")
@click.option("--seed", type=int, default=1, show_default=True, help="Noise seed.")
@_guard
def demo(outdir: Path | None, force: bool, seed: int) -> None:
    """Render the bundled fictional scenario and run the whole chain on it.

    Camera profile (flat field, lens distortion) -> calibration (reference lamp, wall mapped
    from printed markers) -> measurement, then the figures against the renderer's truth
    (also written to results/truth_comparison.json).
    """
    import json

    from beamwall import scenario
    from beamwall.pipeline import calibrate_session
    from beamwall.profile_io import build_profile, write_profile
    from beamwall.report.jsonfile import write_calibration
    from beamwall.session import load_calibration_session, load_profile_session

    if outdir is None:
        outdir = Path(tempfile.mkdtemp(prefix="beamwall-demo-"))
    scene_dir = outdir / "scene"
    _check_new(outdir / "results", force, "demo results")
    if scene_dir.exists() and force:
        shutil.rmtree(scene_dir)
    click.echo(f"rendering the demo scenario into {scene_dir} ...", err=True)
    written = scenario.write_demo(scene_dir, seed=seed)

    prof = build_profile(load_profile_session(written.profile_toml))
    _atomic_write(written.profile_json, lambda p: write_profile(prof, p))
    lens = ""
    if prof.distortion is not None:
        lens = (f", lens f = {prof.distortion.focal_length_px:.1f} px, "
                f"k1 = {prof.distortion.coefficients[0]:+.4f}")
    parts = [name for name, part in (("response curve", prof.response),
                                     ("flat field", prof.flat_field),
                                     ("lens distortion", prof.distortion)) if part is not None]
    click.echo(f"1/3 profile: {', '.join(parts)}{lens} -> {written.profile_json}")
    for w in prof.warnings:
        click.echo(f"warning: profile: {w}", err=True)

    cal = calibrate_session(load_calibration_session(written.calibration_toml))
    _atomic_write(written.calibration_json, lambda p: write_calibration(cal, p))
    click.echo(f"2/3 calibrate: {cal.lux_per_signal:.6g} lx per signal unit "
               f"± {100 * cal.relative_sigma:.1f} % -> {written.calibration_json}")
    for w in cal.warnings:
        click.echo(f"warning: calibration: {w}", err=True)

    results_dir = outdir / "results"
    result = run_measure(written.session_toml, results_dir, calibration=None, force=True)
    click.echo(f"3/3 measure: {len(result.shots)} shots, wall from "
               f"{result.settings.get('wall_points')} marker corners (RMS "
               f"{result.settings.get('wall_rms_error_mm', 0.0):.1f} mm) -> "
               f"{results_dir / 'results.json'}")
    _print_result(result, results_dir)

    errors = scenario.truth_errors(result, written.truth)
    outside = scenario.outside_tolerance(errors)
    comparison = {"tolerances": scenario.TOLERANCES, "errors": errors, "outside": list(outside)}
    text = json.dumps(comparison, indent=1) + "\n"
    _atomic_write(results_dir / "truth_comparison.json",
                  lambda p: p.write_text(text, encoding="utf-8"))
    click.echo("")
    click.echo("against the renderer's ground truth:")
    click.echo(scenario.format_truth_comparison(result, written.truth))
    limits = ", ".join(f"{k} {100 * v:g} %" for k, v in scenario.TOLERANCES.items())
    if outside:
        click.echo(f"outside the tolerances ({limits}): {'; '.join(outside)}")
    else:
        click.echo(f"every figure within the tolerances ({limits})")
    click.echo(CAUTION, err=True)


main.add_command(power)
main.add_command(check)
main.add_command(target)
main.add_command(profile)


if __name__ == "__main__":  # pragma: no cover
    main()
