"""Bundled sample systems. Invented scenarios for demonstration only: not real installations."""
