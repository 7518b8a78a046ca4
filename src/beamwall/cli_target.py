"""``beamwall target -o FILE.pdf|png``: printable marker sheets for the wall."""

from __future__ import annotations

import sys
from pathlib import Path

import click

from beamwall.errors import BeamwallError, InputError

__all__ = ["check_ids", "target"]


def check_ids(text: str) -> tuple[int, ...]:
    """Parse ``"0-3"``, ``"0,1,5"`` or ``"0-2,7"`` into marker ids (0 to 49, distinct).

    Examples
    --------
    >>> check_ids("0-2,7")
    (0, 1, 2, 7)
    """
    out: list[int] = []
    try:
        for part in text.split(","):
            part = part.strip()
            if "-" in part:
                a, b = (int(v) for v in part.split("-", 1))
                out.extend(range(a, b + 1))
            elif part:
                out.append(int(part))
    except ValueError:
        raise InputError(f"must look like 0-3 or 0,1,5, got {text!r}", field="--ids") from None
    bad = [i for i in out if not 0 <= i <= 49]
    if not out or bad or len(set(out)) != len(out):
        raise InputError(f"ids must be distinct, 0 to 49, got {text!r}", field="--ids")
    return tuple(out)


@click.command()
@click.option("-o", "--output", "output", required=True,
              type=click.Path(dir_okay=False, path_type=Path),
              help="FILE.pdf (one page per marker) or FILE.png (one file per marker).")
@click.option("--paper", type=click.Choice(["A4", "Letter", "A3"]), default="A4",
              show_default=True, help="Paper size.")
@click.option("--marker-mm", "marker_mm", type=float, default=150.0, show_default=True,
              help="Printed side of each marker (black border included), mm.")
@click.option("--ids", default="0-3", show_default=True,
              help="Marker ids, e.g. 0-3 or 0,1,5 (4x4_50 dictionary: 0 to 49).")
@click.option("--dpi", type=int, default=300, show_default=True, help="PNG resolution.")
@click.option("--force", is_flag=True, help="Overwrite existing files.")
def target(output: Path, paper: str, marker_mm: float, ids: str, dpi: int, force: bool) -> None:
    """Write printable marker sheets: tape them on the wall for the setup photo."""
    from beamwall.report.target import write_target

    try:
        id_list = check_ids(ids)
        if output.suffix.lower() == ".png" and len(id_list) > 1:
            planned = [output.with_name(f"{output.stem}-{i}.png") for i in id_list]
        else:
            planned = [output]
        for p in planned:
            if p.exists() and not force:
                raise InputError("exists; use --force to overwrite it", file=p)
        output.parent.mkdir(parents=True, exist_ok=True)
        written = write_target(output, ids=id_list, marker_size_mm=marker_mm, paper=paper,
                               dpi=dpi)
    except BeamwallError as exc:
        click.echo(f"beamwall: error: {exc}", err=True)
        sys.exit(2)
    for p in written:
        click.echo(f"wrote {p}")
    click.echo(f"print at 100 %; marker_size_mm = {marker_mm:g}")
