"""Names and defaults that the command line needs before any work starts (its option choices
and defaults), in a module that imports nothing: so that ``faultcalc --help`` starts at once.

The calculation modules take them from here (``faults.FAULT_TYPES``, ``netlist.FAULTS``,
``cablecheck.DEFAULT_TOLERANCE_PCT`` are these), so each is written once.
"""

from __future__ import annotations

# The four fault types, in the order of every table that lists them.
FAULT_TYPES = ("3ph", "slg", "ll", "llg")

# Typed cable R or X further than this from its table row is flagged, percent (the basis is in
# the docstring of conductors/cablecheck.py).
CABLE_TOLERANCE_PCT = 10.0

# The bundled sample systems (invented scenarios, for demonstration only).
SAMPLES = ("plant_480v", "double_ended_480v")
