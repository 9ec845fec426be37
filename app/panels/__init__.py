"""Docked panels around the canvas: the arm panel, the target table and the problems list."""
