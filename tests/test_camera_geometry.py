"""Focal length from the wall mapping (Zhang 2000, sec. 2.3 constraints).

Outside reference: the camera poses are projected with OpenCV's cv2.projectPoints (through
beamwall.synth, whose projection the synth tests check against OpenCV), so the true focal
length is the one OpenCV projected with. Tolerances: 0.5 % with exact points, 6 % with
0.5 px of click noise at 10-20 deg of tilt.
"""

from __future__ import annotations

import cv2
import numpy as np
import pytest

from beamwall import synth, wall
from beamwall.camera_geometry import focal_length_from_homography

MARKS_MM = np.array([[-1000, 600], [1000, 600], [1000, -600], [-1000, -600], [0, 600],
                     [0, -600]], float)


def _project_cv2(pose: synth.CameraPose, mm: np.ndarray) -> np.ndarray:
    r, t = synth.world_to_camera(pose)
    k = synth.camera_matrix(pose)
    obj = np.column_stack([mm / 1000.0, np.zeros(len(mm))])
    px, _ = cv2.projectPoints(obj, cv2.Rodrigues(r)[0], np.asarray(t, float), k, None)
    return px.reshape(-1, 2)


@pytest.mark.parametrize("yaw,pitch,noise,tol", [(10, 5, 0.0, 0.005), (20, 10, 0.0, 0.005),
                                                 (15, 0, 0.5, 0.06), (20, 10, 0.5, 0.06)])
def test_recovers_focal_length(yaw, pitch, noise, tol):
    pose = synth.CameraPose(position_m=(0.3, -0.2, 2.5), yaw_deg=-yaw, pitch_deg=pitch,
                            focal_length_px=1400.0, width_px=1600, height_px=1068)
    px = _project_cv2(pose, MARKS_MM)
    assert np.allclose(px, synth.wall_to_pixel(pose, MARKS_MM), atol=1e-6)
    px = px + np.random.default_rng(1).normal(0, noise, px.shape)
    est = focal_length_from_homography(wall.fit_homography(px, MARKS_MM).wall_to_px,
                                       (1068, 1600))
    assert est.focal_length_px == pytest.approx(1400.0, rel=tol)


def test_refuses_camera_square_to_wall():
    pose = synth.CameraPose(position_m=(0.0, 0.0, 2.5), focal_length_px=1400.0,
                            width_px=1600, height_px=1068)
    px = _project_cv2(pose, MARKS_MM)
    est = focal_length_from_homography(wall.fit_homography(px, MARKS_MM).wall_to_px,
                                       (1068, 1600))
    assert est.focal_length_px is None and "wall" in est.reason
