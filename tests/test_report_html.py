"""report.html: the plot data on their own, the page's make-up, and a real browser.

Sources of the checks: the IES beam/field definitions (50 % and 10 % of the peak); a Gaussian
beam I0 exp(-theta^2 / 2 s^2) crosses a fraction f of its peak at theta = s sqrt(-2 ln f)
(algebra); a wall point at offset r from the axis lies at atan(r / d) (right triangle);
contour lines are traced by contourpy, matplotlib's own contouring library, independently of
our level computation. The browser test drives Debian's ``chromium`` headless.
"""

from __future__ import annotations

import base64
import io
import json
import os
import re
import shutil
import subprocess
from pathlib import Path

import numpy as np
import pytest
from _report_fixtures import gaussian_half_angles_deg, gaussian_shot, session_of, zoom_session

from beamwall.report.html import (
    CAUTIONS,
    azimuthal_profile,
    contour_levels,
    figure_rows,
    mode_ratio_rows,
    plane_profiles,
    render_html,
    wall_extent_mm,
    wall_offset_to_angle_deg,
    write_html,
    zoom_chart_points,
)

ARTIFACTS = Path(__file__).resolve().parents[1] / "test-artifacts"


# ---- plot data ------------------------------------------------------------------------------

def test_contour_levels_are_50_and_10_percent_of_peak():
    assert contour_levels(8000.0) == pytest.approx((800.0, 4000.0))   # IES field, beam levels
    assert contour_levels(float("nan")) == ()
    assert contour_levels(0.0) == ()


def test_contours_drawn_at_those_levels_sit_at_the_gaussian_radii():
    import contourpy

    sigma, d = 6.0, 3.0
    shot = gaussian_shot(sigma_deg=sigma, peak=8000.0, distance_m=d, wall_step_mm=5.0,
                         wall_half_mm=800.0)
    grid = shot.intensity_map
    ny, nx = grid.values.shape
    xs = grid.x0_mm + np.arange(nx) * grid.step_mm
    ys = grid.y0_mm - np.arange(ny) * grid.step_mm
    gen = contourpy.contour_generator(xs, ys, np.ma.masked_invalid(grid.values.astype(float)))
    half50, half10 = gaussian_half_angles_deg(sigma)
    for level, half in zip(contour_levels(8000.0), (half10, half50)):
        lines = gen.lines(level)
        vertices = np.concatenate(lines)
        radius = np.hypot(vertices[:, 0], vertices[:, 1])
        expected = 1000.0 * d * np.tan(np.radians(half))     # right triangle on the wall
        np.testing.assert_allclose(radius, expected, rtol=0.01)


def test_azimuthal_profile_matches_numpy_on_data_with_gaps():
    rng = np.random.default_rng(7)
    values = rng.uniform(0, 100, size=(30, 24))
    values[rng.random(values.shape) < 0.2] = np.nan
    values[:, 0] = 1.0                                     # every row keeps a value
    dist = gaussian_shot().distribution
    from dataclasses import replace
    dist = replace(dist, theta_deg=np.arange(30.0), phi_deg=np.arange(0.0, 360.0, 15.0),
                   intensity=values)
    p = azimuthal_profile(dist)
    np.testing.assert_allclose(p.mean, np.nanmean(values, axis=1))
    np.testing.assert_allclose(p.std, np.nanstd(values, axis=1))
    np.testing.assert_allclose(p.minimum, np.nanmin(values, axis=1))
    np.testing.assert_allclose(p.maximum, np.nanmax(values, axis=1))
    np.testing.assert_array_equal(p.n_valid, np.isfinite(values).sum(axis=1))


def test_profile_of_gaussian_crosses_half_peak_at_beam_half_angle():
    shot = gaussian_shot(sigma_deg=5.0, peak=1000.0, theta_step_deg=0.05, wall_half_mm=5000.0)
    p = azimuthal_profile(shot.distribution)
    half50, _ = gaussian_half_angles_deg(5.0)
    assert np.interp(half50, p.theta_deg, p.mean) == pytest.approx(500.0, rel=1e-3)
    assert np.nanmax(p.std) < 1e-9          # round beam: no spread over azimuth


def test_plane_profiles_take_the_opposite_half_plane_for_negative_angles():
    shot = gaussian_shot(sigma_deg=5.0, ellipticity=2.0)
    (p0, t0, i0), (p90, t90, i90) = plane_profiles(shot.distribution)
    assert (p0, p90) == (0.0, 90.0)
    assert t0[0] < 0 < t0[-1] and np.all(np.diff(t0) > 0)
    # the beam is twice as wide along wall y (90 deg plane) as along x
    half = gaussian_half_angles_deg(5.0)[0]
    assert np.interp(half, t0[t0 >= 0], i0[t0 >= 0]) == pytest.approx(4000.0, rel=0.01)
    assert np.interp(2 * half, t90[t90 >= 0], i90[t90 >= 0]) == pytest.approx(4000.0, rel=0.01)


def test_wall_scale_in_degrees():
    # right triangle: 3 m away, 3000 mm off axis is 45 deg; 1000 mm is atan(1/3) = 18.43 deg
    np.testing.assert_allclose(wall_offset_to_angle_deg([3000.0, 1000.0], 3.0),
                               [45.0, 18.434948822922], rtol=1e-9)
    g = gaussian_shot(wall_half_mm=500.0, wall_step_mm=10.0).intensity_map
    left, right, bottom, top = wall_extent_mm(g)
    assert (left, right, bottom, top) == pytest.approx((-505.0, 505.0, -505.0, 505.0))


def test_zoom_points_and_mode_ratios():
    session = zoom_session(4)
    points = zoom_chart_points(session)
    assert [p["unit"] for p in points] == ["cd"] * 4
    assert points[0]["peak"] == pytest.approx(40000.0)
    rows = mode_ratio_rows(session)
    low = [r for r in rows if r["mode"] == "low"]
    assert [r["peak_ratio"] for r in low] == pytest.approx([0.3, 0.3])
    uncal = zoom_session(2, calibrated=False)
    assert {p["unit"] for p in zoom_chart_points(uncal)} == {"relative"}


def test_figure_rows_show_dash_for_missing():
    rows = {r[0]: r for r in figure_rows(gaussian_shot(calibrated=False))}
    assert rows["Peak intensity"][1:] == ("—", "—", "cd")
    assert rows["Beam angle (50 % of peak)"][2] == "0.2"


# ---- the page -------------------------------------------------------------------------------

def _images(text: str) -> list[bytes]:
    return [base64.b64decode(m) for m in
            re.findall(r'<img src="data:image/png;base64,([A-Za-z0-9+/=]+)"', text)]


def test_page_is_self_contained_and_complete(tmp_path):
    from PIL import Image

    session = zoom_session(4)
    path = write_html(session, tmp_path / "report.html")
    text = path.read_text(encoding="utf-8")
    assert "<script" not in text.lower()
    assert not re.search(r'(src|href)\s*=\s*"(?!data:|#)', text)    # no external resource
    assert "http://" not in text and "https://" not in text
    images = _images(text)
    assert len(images) == 1 + 3 * 4                 # zoom chart + 3 plots per shot
    for data in images:
        with Image.open(io.BytesIO(data)) as im:
            im.verify()
        with Image.open(io.BytesIO(data)) as im:
            assert im.size[0] > 200 and im.size[1] > 200
    for needle in ("Zoom comparison", "Mode ratios", "Electrical cross-check", "Claim audit",
                   "Calibration used", "Inputs", "ab" * 32, "reference lamp",
                   "@media print", "max-width:100%", 'name="viewport"'):
        assert needle in text, needle
    assert "demo warning: &lt;b&gt;not bold&lt;/b&gt;, &amp; escaped" in text
    assert all(c.split(",")[0].replace("'", "&#x27;") in text for c in CAUTIONS)


def test_uncalibrated_and_sparse_sessions_render():
    from dataclasses import replace

    uncal = zoom_session(2, calibrated=False)
    text = render_html(uncal)
    assert "not calibrated" in text and "intensity (relative)" not in text   # text is in PNGs
    bare = replace(gaussian_shot("bare"), distribution=None, intensity_map=None)
    text = render_html(session_of([bare]))
    assert "No intensity data to draw" in text
    assert "No shots" in render_html(session_of([]))


# ---- a real browser -------------------------------------------------------------------------

_CHROMIUM = shutil.which("chromium") or ("/usr/bin/chromium"
                                         if os.path.exists("/usr/bin/chromium") else None)

_CHECK_SCRIPT = """<script>
window.__errors = [];
window.addEventListener('error', function (e) {
  window.__errors.push(String(e.message || (e.target && e.target.tagName) || 'error'));
}, true);
window.addEventListener('load', function () {
  var imgs = Array.prototype.slice.call(document.images);
  var out = {n: imgs.length,
             broken: imgs.filter(function (i) { return !(i.complete && i.naturalWidth > 0); })
                         .length,
             errors: window.__errors,
             scrollWidth: document.documentElement.scrollWidth,
             clientWidth: document.documentElement.clientWidth};
  var pre = document.createElement('pre');
  pre.id = 'beamwall-check';
  pre.textContent = JSON.stringify(out);
  document.body.appendChild(pre);
});
</script>"""


def _chromium(args: list[str], profile: Path) -> subprocess.CompletedProcess:
    cmd = [_CHROMIUM, "--headless", "--no-sandbox", "--disable-gpu", "--disable-quic",
           "--no-first-run", "--disable-background-networking", "--disable-component-update",
           "--disable-sync", f"--user-data-dir={profile}", "--hide-scrollbars",
           "--enable-logging=stderr", "--v=0", *args]
    return subprocess.run(cmd, capture_output=True, text=True, timeout=90, check=False)


@pytest.mark.skipif(_CHROMIUM is None,
                    reason="chromium not installed (Debian package 'chromium', which "
                           ".ci/run installs)")
def test_report_in_headless_chromium(tmp_path):
    session = zoom_session(4)
    report = write_html(session, tmp_path / "report.html")
    text = report.read_text(encoding="utf-8")
    # the page forbids scripts (CSP); the probe copy allows this one inline script only
    probe = tmp_path / "probe.html"
    probe.write_text(text.replace("style-src 'unsafe-inline'",
                                  "style-src 'unsafe-inline'; script-src 'unsafe-inline'")
                     .replace("<head>", "<head>" + _CHECK_SCRIPT, 1), encoding="utf-8")
    ARTIFACTS.mkdir(exist_ok=True)
    for name, size in (("phone", "390,844"), ("desktop", "1280,900")):
        run = _chromium([f"--window-size={size}", "--virtual-time-budget=10000", "--dump-dom",
                         probe.as_uri()], tmp_path / f"profile-{name}")
        match = re.search(r'<pre id="beamwall-check">(.*?)</pre>', run.stdout, re.S)
        assert match, f"probe did not run ({name}): {run.stderr[-2000:]}"
        check = json.loads(match.group(1).replace("&quot;", '"'))
        assert check["n"] == 13 and check["broken"] == 0, check
        assert check["errors"] == [], check
        # nothing wider than the screen: wide tables scroll inside their own box (headless
        # Chromium may lay --dump-dom pages out at a minimum of 500 px; still narrow)
        assert check["scrollWidth"] <= check["clientWidth"], check
        console = [line for line in run.stderr.splitlines() if "CONSOLE" in line]
        assert console == [], console
        shot = ARTIFACTS / f"report-{name}.png"
        if shot.exists():
            shot.unlink()
        run = _chromium([f"--window-size={size}", "--virtual-time-budget=10000",
                         f"--screenshot={shot}", report.as_uri()], tmp_path / f"shot-{name}")
        console = [line for line in run.stderr.splitlines() if "CONSOLE" in line]
        assert console == [], console
        assert shot.exists() and shot.stat().st_size > 10_000, run.stderr[-2000:]
