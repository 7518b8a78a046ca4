"""Printable marker sheets for the wall: one ArUco 4x4_50 marker per page, as PDF or PNG.

Each page holds the marker (drawn as vector rectangles, one per black cell, so it prints
sharp at any resolution), its id, a centre cross with ticks on the margin for taping and
measuring, a 100 mm scale bar to check that the printer did not rescale, and short
instructions. The pages are drawn with matplotlib in millimetres on a figure of the paper's
size; the PDF comes from matplotlib's PDF backend (vector), the PNG at a stated dpi.

References
----------
.. [OCV-ARUCO] OpenCV documentation, "Detection of ArUco Markers": ``DICT_4X4_50``,
   ``generateImageMarker`` (the marker with its one-cell black border).
.. [ISO216] ISO 216:2007, A series paper sizes: A4 210 x 297 mm, A3 297 x 420 mm; US Letter
   8.5 x 11 in (215.9 x 279.4 mm, ANSI/ASME Y14.1).
"""

from __future__ import annotations

from collections.abc import Sequence
from pathlib import Path

import matplotlib

matplotlib.use("Agg")
import matplotlib.pyplot as plt  # noqa: E402
from matplotlib.backends.backend_pdf import PdfPages  # noqa: E402
from matplotlib.figure import Figure  # noqa: E402
from matplotlib.patches import Rectangle  # noqa: E402

from beamwall.errors import InputError  # noqa: E402
from beamwall.synth_setup import MARKER_CELLS, marker_bitmap  # noqa: E402

__all__ = ["PAPER_MM", "MARGIN_MM", "SCALE_BAR_MM", "max_marker_mm", "target_page",
           "write_target"]

#: Paper sizes, (width, height) in mm, portrait [ISO216]_.
PAPER_MM: dict[str, tuple[float, float]] = {
    "A4": (210.0, 297.0),
    "Letter": (215.9, 279.4),
    "A3": (297.0, 420.0),
}
#: White margin kept around the marker (the detector needs a light quiet zone), and the
#: printer's unprintable edge; mm (common practice, no source).
MARGIN_MM: float = 20.0
#: Length of the scale bar, mm.
SCALE_BAR_MM: float = 100.0
#: Height kept for the title above and the scale bar and text under the marker, mm.
_TEXT_MM = 79.0
_MM_PER_INCH = 25.4

INSTRUCTIONS = (
    "Print at 100 % (no 'fit to page'); check that the scale bar measures {bar:g} mm.",
    "Tape the sheet flat on the wall, upright, the marker's edges parallel to the floor.",
    "Measure the centre cross's position with a tape from one common origin on the wall:",
    "x to the right, y up, as seen from the torch, in mm.",
    "Write it into the session:  markers_mm = {{ \"{id}\" = [x, y], ... }},  "
    "marker_size_mm = {size:g}.",
    "Take the setup photo with the room lit, from the tripod of the beam photos.",
)


def max_marker_mm(paper: str) -> float:
    """Largest marker that fits a page with its margins and text, mm.

    Examples
    --------
    >>> max_marker_mm("A4")
    170.0
    """
    w, h = _paper(paper)
    return float(min(w - 2 * MARGIN_MM, h - 2 * MARGIN_MM - _TEXT_MM))


def _paper(paper: str) -> tuple[float, float]:
    if paper not in PAPER_MM:
        raise InputError(f"must be one of {', '.join(PAPER_MM)}, got {paper!r}", field="paper")
    return PAPER_MM[paper]


def target_page(marker_id: int, *, marker_size_mm: float, paper: str = "A4") -> Figure:
    """Draw one sheet: the marker, its id, the centre cross, the scale bar and instructions.

    Parameters
    ----------
    marker_id : int
        0 to 49 (4x4_50 dictionary [OCV-ARUCO]_).
    marker_size_mm : float
        Side of the printed marker, black border included, mm.
    paper : {"A4", "Letter", "A3"}

    Returns
    -------
    matplotlib.figure.Figure
        The page, the figure's size that of the paper; close it after saving.

    Raises
    ------
    InputError
        An unknown paper, an id outside 0-49, or a marker that does not fit the page.
    """
    w, h = _paper(paper)
    size = float(marker_size_mm)
    if not (size > 0 and size <= max_marker_mm(paper)):
        raise InputError(
            f"must be more than 0 and at most {max_marker_mm(paper):g} mm on {paper}, got "
            f"{marker_size_mm!r}", field="marker_size_mm")
    bits = marker_bitmap(int(marker_id))
    fig = plt.figure(figsize=(w / _MM_PER_INCH, h / _MM_PER_INCH))
    ax = fig.add_axes((0.0, 0.0, 1.0, 1.0))
    ax.set_xlim(0.0, w)
    ax.set_ylim(0.0, h)
    ax.set_axis_off()
    ax.set_aspect("equal")

    x0 = (w - size) / 2.0
    y_top = h - MARGIN_MM - 12.0
    y0 = y_top - size
    cell = size / MARKER_CELLS
    for r in range(MARKER_CELLS):
        for c in range(MARKER_CELLS):
            if not bits[r, c]:
                ax.add_patch(Rectangle((x0 + c * cell, y_top - (r + 1) * cell), cell, cell,
                                       facecolor="black", edgecolor="black", linewidth=0.0,
                                       antialiased=False))
    cx, cy = w / 2.0, y0 + size / 2.0
    # Centre cross (thin, red: it lies on cell boundaries) and ticks on the margin.
    arm = 0.12 * size
    ax.plot([cx - arm, cx + arm], [cy, cy], color="red", linewidth=0.5)
    ax.plot([cx, cx], [cy - arm, cy + arm], color="red", linewidth=0.5)
    tick = 8.0
    for (xa, ya, xb, yb) in ((x0 - 3 - tick, cy, x0 - 3, cy), (x0 + size + 3, cy,
                                                               x0 + size + 3 + tick, cy),
                             (cx, y_top + 3, cx, y_top + 3 + tick),
                             (cx, y0 - 3 - tick, cx, y0 - 3)):
        ax.plot([xa, xb], [ya, yb], color="black", linewidth=0.6)

    ax.text(MARGIN_MM, h - MARGIN_MM + 2, f"marker id {int(marker_id)}", fontsize=16,
            fontweight="bold", va="top", ha="left")
    ax.text(w - MARGIN_MM, h - MARGIN_MM + 2,
            f"ArUco 4x4_50 · side {size:g} mm · centre at the cross",
            fontsize=8, va="top", ha="right")

    # Scale bar with 10 mm ticks.
    yb = y0 - 22.0
    xb = (w - SCALE_BAR_MM) / 2.0
    ax.add_patch(Rectangle((xb, yb), SCALE_BAR_MM, 1.5, facecolor="black", linewidth=0.0))
    for k in range(int(SCALE_BAR_MM // 10) + 1):
        ax.plot([xb + 10 * k] * 2, [yb, yb + (5.0 if k % 5 == 0 else 3.0)], color="black",
                linewidth=0.5)
    ax.text(w / 2.0, yb - 2.0, f"{SCALE_BAR_MM:g} mm: check with a ruler", fontsize=8,
            ha="center", va="top")

    y = yb - 12.0
    for line in INSTRUCTIONS:
        ax.text(MARGIN_MM, y, line.format(bar=SCALE_BAR_MM, id=int(marker_id), size=size),
                fontsize=7.5, ha="left", va="top")
        y -= 5.5
    return fig


def write_target(
    path: Path,
    *,
    ids: Sequence[int] = (0, 1, 2, 3),
    marker_size_mm: float = 150.0,
    paper: str = "A4",
    dpi: int = 300,
) -> tuple[Path, ...]:
    """Write the sheets: a PDF with one page per marker, or one PNG per marker.

    Parameters
    ----------
    path : Path
        ``*.pdf`` (all pages in one file) or ``*.png`` (one file per id: the name itself for
        one id, else ``<stem>-<id>.png``).
    ids : sequence of int
        Marker ids, 0 to 49, distinct.
    marker_size_mm : float
        Printed side of each marker, mm.
    paper : {"A4", "Letter", "A3"}
    dpi : int
        PNG resolution, dots per inch (the PDF is vector).

    Returns
    -------
    tuple of Path
        The files written.

    Raises
    ------
    InputError
        Unknown suffix, repeated or invalid ids, a bad size or dpi.
    """
    suffix = path.suffix.lower()
    if suffix not in (".pdf", ".png"):
        raise InputError(f"must end in .pdf or .png, got {path.name!r}", file=path)
    ids = [int(i) for i in ids]
    if not ids or len(set(ids)) != len(ids):
        raise InputError(f"ids must be distinct and at least one, got {ids}", field="ids")
    if not 50 <= int(dpi) <= 2400:
        raise InputError(f"dpi must be 50 to 2400, got {dpi!r}", field="dpi")
    for i in ids:
        marker_bitmap(i)
    if suffix == ".pdf":
        with PdfPages(path, metadata={"Title": "beamwall marker sheets",
                                      "Creator": "beamwall"}) as pdf:
            for i in ids:
                fig = target_page(i, marker_size_mm=marker_size_mm, paper=paper)
                pdf.savefig(fig)
                plt.close(fig)
        return (path,)
    out = []
    for i in ids:
        p = path if len(ids) == 1 else path.with_name(f"{path.stem}-{i}{path.suffix}")
        fig = target_page(i, marker_size_mm=marker_size_mm, paper=paper)
        fig.savefig(p, dpi=int(dpi), format="png", facecolor="white")
        plt.close(fig)
        out.append(p)
    return tuple(out)
