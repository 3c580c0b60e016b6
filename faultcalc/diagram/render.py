"""The drawing written as SVG, PDF or PNG through matplotlib, text kept as text (SVG text
elements; TrueType fonts embedded in the PDF), so that it can be searched and selected."""

from __future__ import annotations

import warnings
from pathlib import Path

from .layout import Drawing
from .shapes import FONT, RASTER_DPI

FORMATS = (".svg", ".pdf", ".png")


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
    elif s.kind == "ref":
        ax.plot([s.x, s.x], [s.y - r, s.y + r * 0.2], color=s.colour, linewidth=1.2)
        ax.add_patch(
            Polygon(
                [(s.x - r * 0.5, s.y + r * 0.2), (s.x + r * 0.5, s.y + r * 0.2), (s.x, s.y + r)],
                closed=True,
                **kw,
            )
        )


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
    else:  # a transformer as a tie: two circles side by side
        ax.add_patch(Circle((s.x - r * 0.42, s.y), r * 0.55, **kw))
        ax.add_patch(Circle((s.x + r * 0.42, s.y), r * 0.55, **kw))
