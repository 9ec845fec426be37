"""The safety caution shown in the window and on every export.

Layouts made with this program inform safety decisions, so every place that
shows or exports a layout repeats this caution. Keep the wording here only.
"""

from __future__ import annotations

__all__ = ["CAUTION_SHORT", "CAUTION_FULL", "CAUTION_LINES"]

CAUTION_SHORT = (
    "Planning aid only: not a risk assessment or validation. Verify with the arm maker's data."
)

CAUTION_LINES = (
    "Elbow Room is a planning aid. Its results are not a risk assessment and not a validation.",
    "Verify reach, joint limits, speeds and clearances with the arm maker's data "
    "for the arm you install.",
    "Carry out the risk assessment per ISO 12100 and ISO 10218-2.",
    "Determine safeguarding distances per ISO 13855.",
    "Local codes and qualified, licensed practice decide.",
)

CAUTION_FULL = "\n".join(CAUTION_LINES)
