"""Kinds of heat exchanger, as a network table or a command line names them.

The registry of exchanger kinds lives here, once: :class:`FlowArrangement` says how the two fluids pass
each other (what the LMTD, the F-factor and ε-NTU depend on), :class:`ExchangerType` which kinds
:mod:`heatloom.equipment.geometry` sizes with a geometry.  A new kind is added to these enums and given
its relations in :mod:`heatloom.equipment`.
"""

from __future__ import annotations

import enum

__all__ = ["FlowArrangement", "ExchangerType"]


class FlowArrangement(enum.Enum):
    """How the two fluids flow past each other (for LMTD and ε-NTU)."""

    COUNTER_CURRENT = "counter_current"
    CO_CURRENT = "co_current"
    SHELL_AND_TUBE_1_2 = "shell_and_tube_1_2"
    """One shell pass, an even number of tube passes; N such shells may be in series."""


class ExchangerType(enum.Enum):
    """Kinds of exchanger that :func:`size_exchanger` sizes with their geometry."""

    DOUBLE_PIPE = "double_pipe"
    """Counter-current double pipe (hairpins)."""
    SHELL_AND_TUBE_1_2 = "shell_and_tube_1_2"
    """1-2 shell and tube, shells in series as needed."""
