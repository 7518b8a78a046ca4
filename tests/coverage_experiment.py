"""Coverage of the reported k=2 intervals, checked against ground truth (JCGM 101, 8: validate).

Each trial renders a fresh noisy scene (reference lamp, torch, dark frame) with the true rig,
then writes the session a user would: the torch distance, the lamp's intensity and distance
and the wall points' pixel positions as *measured*, i.e. the truth plus errors drawn from the
standard uncertainties the session states (distance_sigma_m, intensity_sigma_cd,
distance_sigma_m of the reference, points_sigma_px). beamwall then measures the scene, and
each figure counts as covered when |measured - true| <= 2 u (u = its reported k=1 sigma).

Used by tests/test_uncertainty.py (a short run) and benchmarks/coverage.py (a long one).
"""

from __future__ import annotations

import tempfile
from dataclasses import dataclass
from pathlib import Path

import numpy as np

from beamwall import synth
from beamwall.images import write_image
from beamwall.linear import Exposure
from beamwall.pipeline import calibrate_session, measure_session
from beamwall.session import load_calibration_session, load_session

FIGURES = ("beam_angle_deg", "field_angle_deg", "peak_intensity_cd", "flux_lm", "throw_m")

# Stated input uncertainties (k=1) of the simulated user.
SIGMA_DISTANCE_M = 0.01
SIGMA_LAMP_FRACTION = 0.02
SIGMA_LAMP_DISTANCE_M = 0.005
SIGMA_POINTS_PX = 0.5


@dataclass(frozen=True)
class TrialOutcome:
    errors: dict[str, float]      # measured - true
    sigmas: dict[str, float]      # reported k=1


def _beam(kind: int, rng: np.random.Generator):
    if kind == 0:
        return synth.HotspotSpill(hotspot_cd=float(rng.uniform(2000, 8000)),
                                  hotspot_half_angle_deg=float(rng.uniform(4, 9)),
                                  spill_cd=float(rng.uniform(100, 400)),
                                  spill_half_angle_deg=float(rng.uniform(18, 28)))
    if kind == 1:
        return synth.FlatFlood(plateau_cd=float(rng.uniform(150, 400)),
                               half_angle_deg=float(rng.uniform(18, 28)))
    return synth.SquareSpot(spot_cd=float(rng.uniform(8000, 30000)),
                            half_side_deg=float(rng.uniform(2.5, 4.0)), blur_deg=0.4,
                            halo_cd=150.0, halo_sigma_deg=8.0,
                            rotation_deg=float(rng.uniform(0, 45)))


def run_trial(index: int, *, seed: int = 7, width_px: int = 640, height_px: int = 440
              ) -> TrialOutcome:
    """One rendered scene, measured; errors against truth and the reported sigmas."""
    rng = np.random.default_rng([seed, index])
    beam = _beam(index % 3, rng)
    d_true = float(rng.uniform(1.5, 2.5))
    x, y = float(rng.uniform(0.3, 0.7)) * rng.choice([-1, 1]), float(rng.uniform(-0.3, 0.3))
    z = d_true + float(rng.uniform(0.3, 0.6))
    pose = synth.CameraPose(
        position_m=(x, y, z), yaw_deg=float(-np.degrees(np.arctan2(x, z))),
        pitch_deg=float(-np.degrees(np.arctan2(y, z))), focal_length_px=0.42 * width_px
        * (2.0 if isinstance(beam, synth.SquareSpot) else 1.0),
        width_px=width_px, height_px=height_px)
    lamp_true_cd, lamp_d_true = 100.0, 1.5
    lamp = synth.Scene(beam=synth.ReferenceLamp(axial_intensity_cd=lamp_true_cd),
                       distance_m=lamp_d_true, camera=pose, colour_rgb=synth.TUNGSTEN_RGB)
    scene = synth.Scene(beam=beam, distance_m=d_true, camera=pose, ambient_lx=0.2,
                        colour_rgb=synth.COOL_WHITE_LED_RGB)

    with tempfile.TemporaryDirectory() as tmp_s:
        tmp = Path(tmp_s)

        def shoot(name: str, sc: synth.Scene, s: int, on: bool = True) -> None:
            t = synth.nominal_shutter_s(synth.auto_exposure_s(sc, f_number=4.0, iso=100.0))
            e = Exposure(t, 4.0, 100.0)
            px = synth.render(sc, exposure=e, seed=int(rng.integers(1 << 30)) + s, beam_on=on)
            write_image(tmp / name, px, exposure_s=t, f_number=4.0, iso=100.0,
                        focal_length_mm=5.0, focal_plane_px_per_mm=pose.focal_length_px / 5.0,
                        make="Synthetic", model="Coverage camera")

        shoot("lamp.jpg", lamp, 1)
        shoot("beam.jpg", scene, 2)
        shoot("dark.jpg", scene, 3, on=False)
        marks = np.array([[-900.0, 500.0], [900.0, 500.0], [900.0, -500.0], [-900.0, -500.0]])
        clicked = synth.wall_to_pixel(pose, marks) + rng.normal(0, SIGMA_POINTS_PX, (4, 2))
        points = ",\n".join(f"  [{a:.3f}, {b:.3f}, {c:.0f}, {d:.0f}]"
                            for (a, b), (c, d) in zip(clicked, marks))
        wall_toml = f"[wall]\npoints = [\n{points}\n]\npoints_sigma_px = {SIGMA_POINTS_PX}\n"
        lamp_cd = lamp_true_cd * (1 + SIGMA_LAMP_FRACTION * rng.standard_normal())
        lamp_d = lamp_d_true + SIGMA_LAMP_DISTANCE_M * rng.standard_normal()
        (tmp / "cal.toml").write_text(
            wall_toml + '\n[camera]\nencoding = "srgb"\n\n[reference]\nimages = ["lamp.jpg"]\n'
            f"intensity_cd = {lamp_cd:.6f}\nintensity_sigma_cd = "
            f"{SIGMA_LAMP_FRACTION * lamp_true_cd:.6f}\n"
            f"distance_m = {lamp_d:.6f}\ndistance_sigma_m = {SIGMA_LAMP_DISTANCE_M}\n"
            "axis_mm = [0.0, 0.0]\n")
        d_meas = d_true + SIGMA_DISTANCE_M * rng.standard_normal()
        (tmp / "session.toml").write_text(
            f"[rig]\ndistance_m = {d_meas:.6f}\ndistance_sigma_m = {SIGMA_DISTANCE_M}\n\n"
            + wall_toml + '\n[camera]\nencoding = "srgb"\n\n[[shot]]\nlabel = "t"\n'
            'images = ["beam.jpg"]\ndark = "dark.jpg"\n')
        cal = calibrate_session(load_calibration_session(tmp / "cal.toml"))
        shot = measure_session(load_session(tmp / "session.toml"), cal).shots[0]

    tr = synth.truth(beam, distance_m=d_true, n_phi=720)
    true = {"beam_angle_deg": tr.beam_angle_deg, "field_angle_deg": tr.field_angle_deg,
            "peak_intensity_cd": tr.peak_intensity_cd, "throw_m": tr.throw_m,
            "flux_lm": tr.flux_in_cone_lm(shot.flux_half_angle_deg)
            if shot.flux_half_angle_deg else float("nan")}
    sig_names = {"beam_angle_deg": "beam_angle_sigma_deg",
                 "field_angle_deg": "field_angle_sigma_deg",
                 "peak_intensity_cd": "peak_intensity_sigma_cd", "flux_lm": "flux_sigma_lm",
                 "throw_m": "throw_sigma_m"}
    errors, sigmas = {}, {}
    for f in FIGURES:
        v, s = getattr(shot, f), getattr(shot, sig_names[f])
        if v is None or s is None:
            continue
        errors[f] = float(v - true[f])
        sigmas[f] = float(s)
    return TrialOutcome(errors, sigmas)


def coverage(outcomes: list[TrialOutcome], k: float = 2.0) -> dict[str, tuple[float, int]]:
    """Per figure: the share of trials whose error lies within k sigma, and the count."""
    out = {}
    for f in FIGURES:
        hits = [abs(o.errors[f]) <= k * o.sigmas[f] for o in outcomes if f in o.errors]
        out[f] = (float(np.mean(hits)) if hits else float("nan"), len(hits))
    return out


def width_ratio(outcomes: list[TrialOutcome]) -> dict[str, float]:
    """Median reported sigma over the RMS of the normalised errors' scale: about 1 when the
    intervals are as wide as the errors' spread (too wide > 1, too narrow < 1)."""
    out = {}
    for f in FIGURES:
        z = [o.errors[f] / o.sigmas[f] for o in outcomes if f in o.errors and o.sigmas[f] > 0]
        out[f] = float(1.0 / np.sqrt(np.mean(np.square(z)))) if z else float("nan")
    return out
