"""The drawing written as SVG, PDF or PNG through matplotlib, text kept as text (SVG text
elements; TrueType fonts embedded in the PDF), so that it can be searched and selected."""

from __future__ import annotations

import warnings
from pathlib import Path

from .layout import Drawing
from .shapes import FONT, RASTER_DPI

FORMATS = (".svg", ".pdf", ".png")


def page_path(path: str | Path, page: int) -> Path:
    """Where page ``page`` of an SVG or PNG diagram goes: the first at ``path``, the others
    beside it as ``<stem>-p<page><suffix>`` (a PDF holds every page in one file).

    >>> page_path("out/plant.svg", 1).as_posix(), page_path("out/plant.svg", 3).as_posix()
    ('out/plant.svg', 'out/plant-p3.svg')
    """
    path = Path(path)
    return path if page == 1 else path.with_name(f"{path.stem}-p{page}{path.suffix}")


def stale_pages(path: str | Path, pages: int) -> list[Path]:
    """Pages beyond ``pages`` that an earlier, longer diagram left beside ``path``."""
    import re

    path = Path(path)
    pattern = re.compile(re.escape(path.stem) + r"-p(\d+)" + re.escape(path.suffix) + "$")
    folder = path.parent if str(path.parent) else Path(".")
    found = []
    for candidate in folder.glob(f"{path.stem}-p*{path.suffix}") if folder.is_dir() else ():
        match = pattern.fullmatch(candidate.name)
        if match and int(match.group(1)) > pages:
            found.append(candidate)
    return sorted(found)


def figure_of(drawing: Drawing):
    import matplotlib

    matplotlib.use("Agg", force=False)
    from matplotlib.figure import Figure
    from matplotlib.patches import Circle, Polygon, Rectangle

    fig = Figure(figsize=(drawing.width / 72, drawing.height / 72))
    ax = fig.add_axes((0, 0, 1, 1))
    ax.set_xlim(0, drawing.width)
    ax.set_ylim(drawing.height, 0)
    ax.set_axis_off()
    for line in drawing.lines:
        ax.plot(
            [line.x1, line.x2],
            [line.y1, line.y2],
            color=line.colour,
            linewidth=line.width,
            linestyle=(0, (4, 3)) if line.dashed else "solid",
            solid_capstyle="butt",
        )
    for s in drawing.symbols:
        _symbol(ax, s, Circle, Rectangle, Polygon)
    for t in drawing.texts:
        ax.text(
            t.x,
            t.y,
            t.text,
            fontsize=t.size,
            fontweight="bold" if t.bold else "normal",
            family=FONT,
            color=t.colour,
            va="top",
            ha="left",
            parse_math=False,  # a name holding $ is text, never mathematics
        )
    return fig


def _symbol(ax, s, Circle, Rectangle, Polygon) -> None:
    """Symbols after IEC 60617 / IEEE 315: a transformer two overlapping circles, an
    impedance a rectangle, a machine a circle with its letter, a source a circle with a
    hatched infeed, a cable a short line with a tilde mark, a tie's stub an arrow."""
    r = s.w / 2
    if s.turned:  # on a horizontal line: drawn as on a vertical one, turned a quarter
        _turned(ax, s, Circle, Rectangle)
        return
    kw = {"fill": False, "edgecolor": s.colour, "linewidth": 1.2}
    if s.kind == "transformer":
        ax.add_patch(Circle((s.x, s.y - r * 0.42), r * 0.55, **kw))
        ax.add_patch(Circle((s.x, s.y + r * 0.42), r * 0.55, **kw))
    elif s.kind == "impedance":
        ax.add_patch(Rectangle((s.x - r * 0.35, s.y - r * 0.8), r * 0.7, r * 1.6, **kw))
    elif s.kind in ("motor", "generator"):
        ax.add_patch(Circle((s.x, s.y), r * 0.8, **kw))
        ax.text(
            s.x,
            s.y,
            s.letter,
            ha="center",
            va="center",
            fontsize=9,
            family=FONT,
            color=s.colour,
            fontweight="bold",
        )
    elif s.kind == "source":
        ax.add_patch(
            Rectangle((s.x - r * 0.8, s.y - r * 0.8), r * 1.6, r * 1.6, hatch="////", **kw)
        )
    elif s.kind == "cable":
        ax.plot([s.x, s.x], [s.y - r, s.y + r], color=s.colour, linewidth=1.2)
        ax.plot(
            [s.x - r * 0.5, s.x + r * 0.5],
            [s.y + r * 0.3, s.y - r * 0.3],
            color=s.colour,
            linewidth=1.0,
        )
        ax.plot([s.x - r * 0.5, s.x + r * 0.5], [s.y + r * 0.6, s.y], color=s.colour, linewidth=1.0)
    elif s.kind == "offpage":  # a pentagon pointing down, the other page's number in it
        ax.add_patch(
            Polygon(
                [
                    (s.x - r * 0.75, s.y - r * 0.8),
                    (s.x + r * 0.75, s.y - r * 0.8),
                    (s.x + r * 0.75, s.y + r * 0.25),
                    (s.x, s.y + r * 0.9),
                    (s.x - r * 0.75, s.y + r * 0.25),
                ],
                closed=True,
                **kw,
            )
        )
        size = 8 if len(s.letter) < 3 else 6.5
        ax.text(
            s.x,
            s.y - r * 0.1,
            s.letter,
            ha="center",
            va="center",
            fontsize=size,
            family=FONT,
            color=s.colour,
            fontweight="bold",
        )
    elif s.kind == "open":  # an open switch: fixed contact, blade swung off it
        ax.plot([s.x, s.x], [s.y - r, s.y - r * 0.45], color=s.colour, linewidth=1.2)
        ax.plot([s.x - r * 0.3, s.x + r * 0.3], [s.y - r * 0.45] * 2, color=s.colour, lw=1.2)
        ax.plot([s.x, s.x + r * 0.55], [s.y + r * 0.6, s.y - r * 0.3], color=s.colour, lw=1.2)
        ax.add_patch(Circle((s.x, s.y + r * 0.6), r * 0.08, fill=True, color=s.colour))
        ax.plot([s.x, s.x], [s.y + r * 0.6, s.y + r], color=s.colour, linewidth=1.2)
    elif s.kind == "hidden":  # what is not drawn: a dashed triangle, a subtree left out
        ax.add_patch(
            Polygon(
                [
                    (s.x, s.y - r * 0.8),
                    (s.x + r * 0.75, s.y + r * 0.7),
                    (s.x - r * 0.75, s.y + r * 0.7),
                ],
                closed=True,
                linestyle=(0, (2, 2)),
                **kw,
            )
        )
    elif s.kind == "via":  # buses left out on the way: three dots on the drop
        for dy in (-0.5, 0.0, 0.5):
            ax.add_patch(Circle((s.x, s.y + r * dy), r * 0.09, fill=True, color=s.colour))
    elif s.kind == "ref":
        ax.plot([s.x, s.x], [s.y - r, s.y + r * 0.2], color=s.colour, linewidth=1.2)
        ax.add_patch(
            Polygon(
                [(s.x - r * 0.5, s.y + r * 0.2), (s.x + r * 0.5, s.y + r * 0.2), (s.x, s.y + r)],
                closed=True,
                **kw,
            )
        )


def save_pages(drawings: list[Drawing], path: str | Path) -> None:
    """Write ``drawings`` to ``path`` as one PDF, a page per drawing, each page its size."""
    import matplotlib
    from matplotlib.backends.backend_pdf import PdfPages

    settings = {"pdf.fonttype": 42, "hatch.linewidth": 0.6}
    with matplotlib.rc_context(settings), warnings.catch_warnings():
        warnings.filterwarnings("ignore", message=r"Glyph \d+ .* missing")  # said in the notes
        with PdfPages(path, metadata=_metadata(".pdf")) as pdf:
            for drawing in drawings:
                pdf.savefig(figure_of(drawing))


def save(drawing: Drawing, path: str | Path, suffix: str | None = None) -> None:
    """Write ``drawing`` to ``path`` as ``suffix`` (.svg, .pdf or .png; default: the path's)."""
    import matplotlib

    path = Path(path)
    suffix = (suffix or path.suffix).lower()
    if suffix not in FORMATS:
        raise ValueError(f"a diagram is written as {', '.join(FORMATS)}; got {path.name}")
    fig = figure_of(drawing)
    settings = {"svg.fonttype": "none", "pdf.fonttype": 42, "hatch.linewidth": 0.6}
    with matplotlib.rc_context(settings), warnings.catch_warnings():
        warnings.filterwarnings("ignore", message=r"Glyph \d+ .* missing")  # said in the notes
        fig.savefig(path, format=suffix[1:], dpi=RASTER_DPI, metadata=_metadata(suffix))


def _metadata(suffix: str) -> dict:
    return {"Software": "faultcalc"} if suffix == ".png" else {"Creator": "faultcalc"}


def _turned(ax, s, Circle, Rectangle) -> None:
    """An impedance or a cable on a horizontal tie."""
    r = s.w / 2
    kw = {"fill": False, "edgecolor": s.colour, "linewidth": 1.2}
    if s.kind == "impedance":
        ax.add_patch(Rectangle((s.x - r * 0.8, s.y - r * 0.35), r * 1.6, r * 0.7, **kw))
    elif s.kind == "cable":
        ax.plot([s.x - r, s.x + r], [s.y, s.y], color=s.colour, linewidth=1.2)
        for dx in (-0.15, 0.2):
            ax.plot(
                [s.x + (dx - 0.3) * r, s.x + (dx + 0.3) * r],
                [s.y + r * 0.5, s.y - r * 0.5],
                color=s.colour,
                linewidth=1.0,
            )
    elif s.kind == "open":  # an open switch on a horizontal tie
        ax.plot([s.x - r, s.x - r * 0.45], [s.y, s.y], color=s.colour, linewidth=1.2)
        ax.plot([s.x - r * 0.45] * 2, [s.y - r * 0.3, s.y + r * 0.3], color=s.colour, lw=1.2)
        ax.plot([s.x + r * 0.6, s.x - r * 0.3], [s.y, s.y - r * 0.55], color=s.colour, lw=1.2)
        ax.add_patch(Circle((s.x + r * 0.6, s.y), r * 0.08, fill=True, color=s.colour))
        ax.plot([s.x + r * 0.6, s.x + r], [s.y, s.y], color=s.colour, linewidth=1.2)
    else:  # a transformer as a tie: two circles side by side
        ax.add_patch(Circle((s.x - r * 0.42, s.y), r * 0.55, **kw))
        ax.add_patch(Circle((s.x + r * 0.42, s.y), r * 0.55, **kw))
