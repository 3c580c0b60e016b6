"""From a System to the results: per-unit, network, Thevenin, faults, asymmetry, duty."""
