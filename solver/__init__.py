"""Ropewright's engine: rig model, file format, materials, equilibrium and checks. Never imports Qt."""

__version__ = "0.1.0"
