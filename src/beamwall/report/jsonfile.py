"""results.json and calibration JSON: write (and read back) per the contract.

The keys are the contract's (``docs/contract.md``); numbers are written with 6 significant
digits, non-finite numbers as null.
"""

from __future__ import annotations

import json
import math
from pathlib import Path
from typing import Any

from beamwall.calibrate import Calibration, calibration_from_dict
from beamwall.errors import CalibrationError
from beamwall.results import SessionResult, ShotResult

__all__ = [
    "shot_to_dict",
    "results_to_dict",
    "write_results",
    "write_calibration",
    "read_calibration",
    "SHOT_KEYS",
]

#: Per-shot keys written to results.json, in order (contract keys first, then extensions).
SHOT_KEYS: tuple[str, ...] = (
    "label", "zoom", "mode",
    "beam_angle_deg", "beam_angle_sigma_deg",
    "field_angle_deg", "field_angle_sigma_deg",
    "peak_intensity_cd", "peak_intensity_sigma_cd",
    "throw_m", "throw_sigma_m",
    "flux_lm", "flux_sigma_lm", "flux_half_angle_deg", "flux_total_max_lm",
    "axis_mm", "saturated_fraction",
    "relative_peak_intensity", "relative_flux",
    "spectral_correction_factor", "spectral_correction_sigma",
    "spectral_mismatch_f1_prime", "luminance_weights",
    "warnings",
    "beam_angle_min_deg", "beam_angle_max_deg",
    "field_angle_min_deg", "field_angle_max_deg",
    "distance_m",
    "uncertainty_budget",
)


def _clean(v: Any) -> Any:
    """JSON-ready copy: tuples to lists, floats to 6 significant digits, NaN/inf to None."""
    if isinstance(v, bool) or v is None or isinstance(v, (str, int)):
        return v
    if isinstance(v, float) or hasattr(v, "__float__") and not isinstance(v, (list, tuple)):
        try:
            f = float(v)
        except (TypeError, ValueError):
            return str(v)
        if not math.isfinite(f):
            return None
        return float(f"{f:.6g}")
    if isinstance(v, dict):
        return {str(k): _clean(x) for k, x in v.items()}
    if isinstance(v, (list, tuple)):
        return [_clean(x) for x in v]
    return str(v)


def shot_to_dict(shot: ShotResult) -> dict[str, Any]:
    """One entry of ``shots`` in results.json."""
    d: dict[str, Any] = {key: _clean(getattr(shot, key)) for key in SHOT_KEYS}
    if shot.electrical is not None:
        d["electrical"] = _clean(shot.electrical)
    if shot.claims:
        d["claims"] = _clean(list(shot.claims))
    return d


def results_to_dict(result: SessionResult) -> dict[str, Any]:
    """The whole results.json mapping."""
    d: dict[str, Any] = {
        "beamwall_version": result.beamwall_version,
        "calibrated": result.calibrated,
        "shots": [shot_to_dict(s) for s in result.shots],
    }
    if result.zoom is not None:
        d["zoom"] = _clean(result.zoom)
    if result.modes:
        d["modes"] = _clean(list(result.modes))
    if result.electrical is not None:
        d["electrical"] = _clean(result.electrical)
    d["claims"] = _clean(list(result.claims))
    d["title"] = result.title
    d["session_file"] = result.session_file
    d["calibration"] = _clean(result.calibration)
    d["warnings"] = list(result.warnings)
    d["settings"] = _clean(result.settings)
    d["inputs"] = [{"role": i.role, "path": i.path, "sha256": i.sha256} for i in result.inputs]
    d["created_utc"] = result.created_utc
    return d


def write_results(result: SessionResult, path: Path) -> None:
    """Write results.json."""
    Path(path).write_text(json.dumps(results_to_dict(result), indent=2) + "\n", encoding="utf-8")


def write_calibration(calibration: Calibration, path: Path) -> None:
    """Write a calibration JSON file."""
    data = _clean(calibration.to_dict())
    data["format"] = "beamwall calibration 1"
    Path(path).write_text(json.dumps(data, indent=2) + "\n", encoding="utf-8")


def read_calibration(path: Path) -> Calibration:
    """Read a calibration JSON file.

    Raises
    ------
    CalibrationError
        Unreadable or not JSON, or a field missing or invalid (file and field named).
    """
    p = Path(path)
    try:
        data = json.loads(p.read_text(encoding="utf-8"))
    except FileNotFoundError:
        raise CalibrationError("file not found", file=p) from None
    except (OSError, UnicodeDecodeError) as exc:
        raise CalibrationError(f"cannot read: {exc}", file=p) from None
    except json.JSONDecodeError as exc:
        raise CalibrationError(f"not JSON (line {exc.lineno}: {exc.msg})", file=p) from None
    if not isinstance(data, dict):
        raise CalibrationError("not a beamwall calibration (expected a JSON object)", file=p)
    return calibration_from_dict(data, file=str(p))
