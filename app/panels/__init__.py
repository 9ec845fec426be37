"""Docked panels around the canvas: the arm panel, the target table, the problems list and
the timeline."""
