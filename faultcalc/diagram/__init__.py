"""The one-line diagram: the network drawn from its topology alone, annotated with a study.

Data flow: ``topology`` (System -> a spanning tree from the sources down, with the branches
that close loops and ties kept beside it), ``layout`` (the tree -> shapes at positions in
points, each with its box), ``render`` (shapes -> SVG, PDF or PNG through matplotlib, text
kept as text). The shapes are the geometry the tests check: every bus, element and label is
there and no box overlaps another.
"""

from __future__ import annotations

from .layout import Drawing, draw
from .render import FORMATS, save

__all__ = ["FORMATS", "Drawing", "draw", "save"]
