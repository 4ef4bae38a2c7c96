"""Ropewright sketchpad: the PySide6 application, a thin view over the solver."""
