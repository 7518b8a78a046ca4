"""The ``beamwall profile`` command: characterise a camera once from the photos a TOML lists.

Register it with ``main.add_command(profile)``. Exit status 2 with one line on stderr for bad
input (a raw file LibRaw cannot read, a bracket of one frame, a checkerboard not found, ...);
the profile is written through a temporary file and renamed, so nothing is half-written.
"""

from __future__ import annotations

import os
import sys
import tempfile
from pathlib import Path

import click

from beamwall.errors import BeamwallError, InputError

__all__ = ["profile"]


@click.command("profile")
@click.argument("profile_toml", type=click.Path(dir_okay=False, path_type=Path))
@click.option("-o", "--output", "output", required=True,
              type=click.Path(dir_okay=False, path_type=Path),
              help="Profile file to write, e.g. calibration/NAME.profile.json.")
@click.option("--force", is_flag=True, help="Overwrite an existing profile file.")
def profile(profile_toml: Path, output: Path, force: bool) -> None:
    """Characterise a camera: response curve, flat field, lens distortion."""
    from beamwall.profile_io import build_profile, write_profile
    from beamwall.session import load_profile_session

    try:
        if output.exists() and not force:
            raise InputError("profile file exists; use --force to overwrite it", file=output)
        ps = load_profile_session(profile_toml)
        prof = build_profile(ps)
        output.parent.mkdir(parents=True, exist_ok=True)
        fd, tmp = tempfile.mkstemp(prefix=f".{output.name}.", dir=output.parent)
        os.close(fd)
        try:
            write_profile(prof, tmp)
            os.replace(tmp, output)
        finally:
            if os.path.exists(tmp):
                os.unlink(tmp)
    except BeamwallError as exc:
        click.echo(f"beamwall: error: {exc}", err=True)
        sys.exit(2)
    parts = [name for name, part in (("response curve", prof.response),
                                     ("flat field", prof.flat_field),
                                     ("lens distortion", prof.distortion)) if part is not None]
    ident = " ".join(p for p in (prof.make, prof.model) if p) or "camera without EXIF"
    click.echo(f"profile: {ident}, {prof.image_size_px[0]}x{prof.image_size_px[1]} px"
               f"{' raw' if prof.raw else ''}: {', '.join(parts)}")
    if prof.distortion is not None:
        click.echo(f"lens: f = {prof.distortion.focal_length_px:.1f} px, k1 = "
                   f"{prof.distortion.coefficients[0]:+.4f}, k2 = "
                   f"{prof.distortion.coefficients[1]:+.4f}, corners RMS "
                   f"{prof.distortion.rms_px:.2f} px from {prof.distortion.n_images} photos")
    for w in prof.warnings:
        click.echo(f"warning: {w}", err=True)
    click.echo(f"wrote {output}")
