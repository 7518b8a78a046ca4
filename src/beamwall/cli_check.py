"""``beamwall check SESSION.toml``: a fast pre-flight of a session's photos.

Reads the session and every photo it names, runs :func:`beamwall.preflight.check_session`
and prints each finding with its fix (or, with ``--json``, the report as JSON on stdout).

Exit status: 0 the photos are usable; 1 not usable (a finding failed); 2 bad input (the
session file or a photo cannot be read), with a one-line reason on stderr.
"""

from __future__ import annotations

import json
import sys
from pathlib import Path

import click

from beamwall.errors import BeamwallError

__all__ = ["check"]

_MARK = {"fail": "FAIL", "warn": "warn", "ok": "ok  "}


@click.command()
@click.argument("session_toml", type=click.Path(dir_okay=False, path_type=Path))
@click.option("--json", "as_json", is_flag=True, help="Print the findings as JSON on stdout.")
@click.option("--lens-mm", type=click.FloatRange(min=0.0, min_open=True), default=None,
              help="The torch's front lens (reflector) diameter, mm, for an exact far-field "
                   "check of the distance.")
def check(session_toml: Path, as_json: bool, lens_mm: float | None) -> None:
    """Check a session's photos before leaving the setup (exit 0 usable, 1 not, 2 bad input).

    Looks at the wall mapping (points or markers), exposure metadata and brackets, clipping
    in the hotspot, signal above the dark frame's noise, the 10 % field inside the frame, the
    largest cone covered and the distance against the far-field rule; each finding says what
    to change.
    """
    from beamwall.images import read_frame
    from beamwall.preflight import check_session, session_paths
    from beamwall.session import load_session

    try:
        session = load_session(session_toml)
        frames = {p: read_frame(p) for p in session_paths(session)}
        distortion = None
        if session.camera.profile is not None:
            from beamwall.profile_io import load_profile

            distortion = load_profile(session.camera.profile).distortion
        report = check_session(session, frames, lens_mm=lens_mm, distortion=distortion)
    except BeamwallError as exc:
        click.echo(f"beamwall: error: {exc}", err=True)
        sys.exit(2)
    if as_json:
        click.echo(json.dumps(report.to_dict(), indent=2))
    else:
        for f in report.findings:
            where = f"{f.shot}: " if f.shot else ""
            click.echo(f"{_MARK.get(f.severity, f.severity)}  {where}{f.message}")
            if f.fix and f.severity != "ok":
                click.echo(f"      fix: {f.fix}")
        click.echo("usable" if report.usable else "NOT usable: fix the failures above")
    sys.exit(0 if report.usable else 1)
