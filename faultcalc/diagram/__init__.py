"""The one-line diagram: the network drawn from its topology alone, annotated with a study.

Data flow: ``topology`` (System -> a spanning tree from the sources down, with the branches
that close loops, the ties and the open ties kept beside it), ``reduce`` (a large system's
tree cut down to its levels above 1 kV and its service equipment), ``pages`` (the tree split
by subtree over pages of one sheet each, with references at both ends of every cut),
``layout`` (one page's tree -> shapes at positions in points, each with its box; ``parts``
the pieces it is drawn from, ``footer`` the title block), ``render`` (shapes -> SVG, PDF or
PNG through matplotlib, text kept as text; a PDF of several pages). The shapes are the
geometry the tests check: every bus, element and label is there and no box overlaps another.
"""

from __future__ import annotations

from .layout import Drawing, Reference
from .pages import draw, draw_pages
from .render import FORMATS, save, save_pages

__all__ = ["FORMATS", "Drawing", "Reference", "draw", "draw_pages", "save", "save_pages"]
