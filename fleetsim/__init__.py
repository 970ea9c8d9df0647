"""fleetsim: bearing life models and fleet maintenance simulation.

Planning estimates only: confirm ratings with the bearing maker, follow ISO 281
and local codes, and have safety-critical machinery approved by a qualified,
licensed engineer.
"""

from __future__ import annotations

__version__ = "0.1.0"

SAFETY_CAUTION = (
    "Planning estimates only: confirm ratings with the bearing maker, follow ISO 281 "
    "and local codes, and have safety-critical machinery approved by a qualified, "
    "licensed engineer."
)
