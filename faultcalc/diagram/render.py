"""The drawing written as SVG or PNG through matplotlib (SVG text kept as text elements), and
as PDF through reportlab (pdfdraw.py: TrueType text embedded), so that it can be searched and
selected; both draw the symbols' strokes (strokes.py)."""

from __future__ import annotations

import warnings
from pathlib import Path

from .layout import Drawing
from .shapes import FONT, RASTER_DPI
from .strokes import strokes

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
    """The drawing as a matplotlib figure (for SVG and PNG)."""
    import matplotlib

    matplotlib.use("Agg", force=False)
    from matplotlib.figure import Figure

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
    for symbol in drawing.symbols:
        for stroke in strokes(symbol):
            _stroke(ax, stroke)
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


def _stroke(ax, s) -> None:
    from matplotlib.patches import Circle, Polygon, Rectangle

    style = (0, (2, 2)) if s.dashed else "solid"
    kw = {
        "fill": s.filled,
        "edgecolor": s.colour,
        "facecolor": s.colour if s.filled else "none",
        "linewidth": s.width,
        "linestyle": style,
    }
    if s.kind == "line":
        xs, ys = zip(*s.points, strict=True)
        ax.plot(xs, ys, color=s.colour, linewidth=s.width, solid_capstyle="butt")
    elif s.kind == "polygon":
        ax.add_patch(Polygon(list(s.points), closed=True, **kw))
    elif s.kind == "circle":
        ax.add_patch(Circle((s.x, s.y), s.r, **kw))
    elif s.kind == "rect":
        ax.add_patch(Rectangle((s.x, s.y), s.w, s.h, **kw))
    elif s.kind == "letter":
        ax.text(
            s.x,
            s.y,
            s.text,
            ha="center",
            va="center",
            fontsize=s.size,
            family=FONT,
            color=s.colour,
            fontweight="bold",
            parse_math=False,
        )
    else:
        raise ValueError(f"unknown stroke {s.kind!r}")


def save_pages(drawings: list[Drawing], path: str | Path) -> None:
    """Write ``drawings`` to ``path`` as one PDF, a page per drawing, each page its size."""
    from .pdfdraw import save_pdf

    save_pdf(drawings, path)


def save(drawing: Drawing, path: str | Path, suffix: str | None = None) -> None:
    """Write ``drawing`` to ``path`` as ``suffix`` (.svg, .pdf or .png; default: the path's)."""
    import matplotlib

    path = Path(path)
    suffix = (suffix or path.suffix).lower()
    if suffix not in FORMATS:
        raise ValueError(f"a diagram is written as {', '.join(FORMATS)}; got {path.name}")
    if suffix == ".pdf":
        save_pages([drawing], path)
        return
    fig = figure_of(drawing)
    settings = {"svg.fonttype": "none"}
    with matplotlib.rc_context(settings), warnings.catch_warnings():
        warnings.filterwarnings("ignore", message=r"Glyph \d+ .* missing")  # said in the notes
        fig.savefig(path, format=suffix[1:], dpi=RASTER_DPI, metadata=_metadata(suffix))


def _metadata(suffix: str) -> dict:
    return {"Software": "faultcalc"} if suffix == ".png" else {"Creator": "faultcalc"}
