"""``beamwall power``: the electrical side alone, for a multimeter and no photos yet.

The command reads the LED voltage and current (or the voltage across a known resistor),
prints the LED power, the flux that power allows for an efficacy range, the most flux physics
allows, a verdict on a claimed or measured flux, and, for a light whose current is set by a
resistor, the predicted output against time on a given cell. It delegates every number to
:mod:`beamwall.electrical` and :mod:`beamwall.compare`.
"""

from __future__ import annotations

import csv
import json
import math
from pathlib import Path
from typing import Any

import click

from beamwall.compare import audit_claim
from beamwall.electrical import (
    CAUTIONS,
    RuntimePrediction,
    cross_check,
    electrical_estimate,
    plausibility_bound,
    predict_output_over_time,
)
from beamwall.errors import BeamwallError, InputError
from beamwall.session import ElectricalSpec

__all__ = ["power", "read_ocv_table"]


def read_ocv_table(path: Path) -> tuple[tuple[float, float], ...]:
    """Read a cell's open-circuit voltage table from a CSV file.

    Parameters
    ----------
    path : Path
        CSV with two columns, state of charge and volts, one row per point; a header row is
        skipped; the state of charge may be a fraction (0-1) or a percentage (0-100, taken as
        such when any value exceeds 1).

    Returns
    -------
    tuple of (soc_fraction, volts)
        Sorted by state of charge.

    Raises
    ------
    InputError
        If the file cannot be read or a row is malformed.
    """
    try:
        text = path.read_text(encoding="utf-8")
    except OSError as exc:
        raise InputError(f"cannot read: {exc.strerror}", file=path) from None
    rows: list[tuple[float, float]] = []
    for n, row in enumerate(csv.reader(text.splitlines()), start=1):
        if not row or not "".join(row).strip() or row[0].lstrip().startswith("#"):
            continue
        try:
            soc, volts = float(row[0]), float(row[1])
        except (ValueError, IndexError):
            if not rows and n == 1:
                continue    # a header
            raise InputError("expected two numbers: state of charge, volts",
                             file=path, field=f"row {n}") from None
        if not (math.isfinite(soc) and math.isfinite(volts)):
            raise InputError("not a finite number", file=path, field=f"row {n}")
        rows.append((soc, volts))
    if len(rows) < 2:
        raise InputError("needs at least two rows of state of charge, volts", file=path)
    if max(r[0] for r in rows) > 1.0:
        rows = [(s / 100.0, v) for s, v in rows]
    return tuple(sorted(rows))


def _fmt_hours(seconds: float) -> str:
    minutes = int(round(seconds / 60.0))
    return f"{minutes // 60} h {minutes % 60:02d} min"


def _write_series(path: Path, pred: RuntimePrediction) -> None:
    cols: list[tuple[str, Any]] = [
        ("time_s", pred.time_s), ("current_a", pred.current_a), ("led_volts", pred.led_volts),
        ("cell_volts", pred.cell_volts), ("soc_fraction", pred.soc_fraction),
        ("power_w", pred.power_w), ("relative_output", pred.relative_output)]
    if pred.flux_lm is not None:
        cols.append(("flux_lm", pred.flux_lm))
    if pred.intensity_cd is not None:
        cols.append(("intensity_cd", pred.intensity_cd))
    with path.open("w", newline="", encoding="utf-8") as fh:
        w = csv.writer(fh)
        w.writerow([c[0] for c in cols])
        for k in range(len(pred.time_s)):
            w.writerow([f"{float(c[1][k]):.6g}" for c in cols])


@click.command("power")
@click.option("--led-volts", type=float, required=True,
              help="Voltage across the LED while lit, V.")
@click.option("--led-amps", type=float, default=None,
              help="LED current read directly (meter in series), A.")
@click.option("--sense-volts", type=float, default=None,
              help="Voltage across a sense or ballast resistor, V (with --sense-ohms).")
@click.option("--sense-ohms", type=float, default=None,
              help="That resistor's resistance, ohm.")
@click.option("--efficacy", "efficacy", type=float, nargs=2, default=None,
              metavar="LOW HIGH", help="Plausible emitter efficacy range at this drive, lm/W.")
@click.option("--duty", type=float, default=1.0, show_default=True,
              help="PWM duty cycle of the mode, 0-1.")
@click.option("--measured-lm", type=float, default=None,
              help="A flux measured some other way, lm, to cross-check.")
@click.option("--measured-sigma-lm", type=float, default=None,
              help="Its standard uncertainty (k=1), lm.")
@click.option("--claimed-lm", type=float, default=None,
              help="The maker's claimed flux for this mode, lm, checked against physics.")
@click.option("--capacity-ah", type=float, default=None,
              help="Cell capacity, Ah: predicts output over time (resistor-limited lights).")
@click.option("--ballast-ohms", type=float, default=None,
              help="Resistance that sets the current, ohm (default: --sense-ohms).")
@click.option("--cell-ohms", type=float, default=None,
              help="Cell internal resistance, ohm (default: a typical high-drain cell).")
@click.option("--driver-drop-volts", type=float, default=None,
              help="Drop in switch, springs and wiring, V (default: inferred from the reading).")
@click.option("--ocv-table", type=click.Path(dir_okay=False, path_type=Path), default=None,
              help="CSV of state of charge (fraction or %), open-circuit volts.")
@click.option("--cell-volts", type=float, default=None,
              help="Cell's resting voltage when the readings were taken, V (default: full).")
@click.option("--cutoff-volts", type=float, default=None,
              help="Low-voltage cutoff of a protected cell or the light, V.")
@click.option("-o", "output", type=click.Path(dir_okay=False, path_type=Path), default=None,
              help="Write the predicted output over time to this CSV.")
@click.option("--force", is_flag=True, help="Overwrite the -o file if it exists.")
@click.option("--json", "as_json", is_flag=True, help="Print the results as JSON.")
@click.pass_context
def power(ctx: click.Context, led_volts: float, led_amps: float | None,
          sense_volts: float | None, sense_ohms: float | None,
          efficacy: tuple[float, float] | None, duty: float, measured_lm: float | None,
          measured_sigma_lm: float | None, claimed_lm: float | None,
          capacity_ah: float | None, ballast_ohms: float | None, cell_ohms: float | None,
          driver_drop_volts: float | None, ocv_table: Path | None,
          cell_volts: float | None, cutoff_volts: float | None, output: Path | None, force: bool,
          as_json: bool) -> None:
    """Estimate an LED's power and flux from multimeter readings, no photos needed.

    Give the LED voltage and its current, either read directly (--led-amps) or as the voltage
    across a known resistor (--sense-volts, --sense-ohms). Add --efficacy for a flux
    estimate, --claimed-lm to check a claim against physics, and --capacity-ah to predict
    the output over time of a light whose current is set by a resistor.
    """
    try:
        result = _run(led_volts=led_volts, led_amps=led_amps, sense_volts=sense_volts,
                      sense_ohms=sense_ohms, efficacy=efficacy, duty=duty,
                      measured_lm=measured_lm, measured_sigma_lm=measured_sigma_lm,
                      claimed_lm=claimed_lm, capacity_ah=capacity_ah,
                      ballast_ohms=ballast_ohms, cell_ohms=cell_ohms,
                      driver_drop_volts=driver_drop_volts, ocv_table=ocv_table,
                      cell_volts=cell_volts, cutoff_volts=cutoff_volts)
        if output is not None:
            pred = result["prediction"]
            if pred is None:
                raise InputError("needs --capacity-ah (there is no prediction to write)",
                                 field="-o")
            if output.exists() and not force:
                raise InputError("exists; use --force to overwrite", file=output)
            try:
                _write_series(output, pred)
            except OSError as exc:
                raise InputError(f"cannot write: {exc.strerror}", file=output) from None
    except BeamwallError as exc:
        click.echo(f"error: {exc}", err=True)
        ctx.exit(2)
        return
    if as_json:
        click.echo(json.dumps(result["json"], indent=2))
    else:
        click.echo("\n".join(result["lines"]))


def _run(**kw: Any) -> dict[str, Any]:
    eff = kw["efficacy"]
    spec = ElectricalSpec(led_volts=kw["led_volts"], sense_volts=kw["sense_volts"],
                          sense_ohms=kw["sense_ohms"], led_amps=kw["led_amps"],
                          efficacy_lm_per_w=None if not eff else (eff[0], eff[1]),
                          pwm_duty=kw["duty"])
    est = electrical_estimate(spec, source="command line", table="power")
    check = cross_check(est, kw["measured_lm"], flux_sigma_lm=kw["measured_sigma_lm"],
                        flux_basis="measured_lm")
    bound = plausibility_bound(average_watts=est.average_watts)
    lines: list[str] = []
    lines.append("Electrical estimate")
    lines.append(f"  LED current     {est.led_amps:.4g} A ({est.current_source})")
    lines.append(f"  LED power       {est.led_watts:.4g} W")
    if est.pwm_duty < 1.0:
        lines.append(f"  average power   {est.average_watts:.4g} W (duty {est.pwm_duty:g})")
    if est.flux_estimate_lm is not None and est.efficacy_lm_per_w is not None:
        lo, hi = est.flux_estimate_lm
        e_lo, e_hi = est.efficacy_lm_per_w
        lines.append(f"  flux estimate   {lo:.4g}-{hi:.4g} lm (at {e_lo:g}-{e_hi:g} lm/W)")
    lines.append(f"  physical limit  {bound.max_flux_lm:.4g} lm "
                 f"({bound.max_watts:.4g} W x {bound.efficacy_ceiling_lm_per_w:g} lm/W); "
                 f"{bound.hard_max_flux_lm:.4g} lm at 683 lm/W")
    if check.implied_efficacy_lm_per_w is not None:
        lines.append("Cross-check")
        lines.append(f"  implied efficacy {check.implied_efficacy_lm_per_w:.4g} lm/W: "
                     f"{check.verdict}")
        lines.extend(f"  - {r}" for r in check.reasons)
    claim = None
    if kw["claimed_lm"] is not None:
        claim = audit_claim("power", "flux_lm", kw["claimed_lm"], kw["measured_lm"],
                            measured_sigma=kw["measured_sigma_lm"],
                            physical_limit=bound.max_flux_lm,
                            limit_reason="; ".join(bound.reasons), flux_basis="measured_lm")
        lines.append("Claim")
        lines.append(f"  claimed {claim.claimed:.4g} lm: {claim.verdict}")
        lines.extend(f"  - {r}" for r in claim.reasons)
    pred = None
    if kw["capacity_ah"] is not None:
        ballast = kw["ballast_ohms"] if kw["ballast_ohms"] is not None else kw["sense_ohms"]
        if ballast is None:
            raise InputError("give --ballast-ohms (or --sense-ohms) to predict the output "
                             "over time", field="--capacity-ah")
        table = None if kw["ocv_table"] is None else read_ocv_table(kw["ocv_table"])
        flux_start = kw["measured_lm"]
        pred = predict_output_over_time(
            led_volts=est.led_volts, led_amps=est.led_amps, ballast_ohms=ballast,
            capacity_ah=kw["capacity_ah"], cell_ocv_table=table, cell_ohms=kw["cell_ohms"],
            driver_drop_volts=kw["driver_drop_volts"], pwm_duty=est.pwm_duty,
            measured_cell_volts=kw["cell_volts"], flux_lm=flux_start,
            cutoff_volts=kw["cutoff_volts"])
        lines.append("Output over time (resistor-limited light)")
        lines.append(f"  run time to 10 % of the 30 s output: {_fmt_hours(pred.runtime_s)} "
                     f"({pred.stop_reason})")
        lines.append("  time        current   power    output")
        n = len(pred.time_s)
        for k in sorted({int(round(j * (n - 1) / 8)) for j in range(9)}):
            lines.append(f"  {_fmt_hours(float(pred.time_s[k])):>10}  "
                         f"{pred.current_a[k]:6.3f} A  {pred.power_w[k]:6.3f} W  "
                         f"{100 * pred.relative_output[k]:5.1f} %")
        lines.extend(f"  assumption: {a}" for a in pred.assumptions)
        lines.extend(f"  warning: {w}" for w in pred.warnings)
    lines.extend(f"warning: {w}" for w in est.warnings + check.warnings)
    lines.append("Cautions")
    lines.extend(f"  - {c}" for c in CAUTIONS)
    summary = None
    if pred is not None:
        summary = pred.to_dict()
    out = {
        "electrical": check.to_dict(),
        "physical_limit": bound.to_dict(),
        "claims": [] if claim is None else [claim.to_dict()],
        "output_over_time": summary,
        "cautions": list(CAUTIONS),
    }
    return {"lines": lines, "json": out, "prediction": pred}
