"""Kinds of heat exchanger, as a network table, a command line or the API names them.

:class:`ExchangerType` is the single registry of exchanger kinds.  A kind says how the two fluids pass
each other (what the LMTD, the F-factor and ε-NTU depend on: :attr:`ExchangerType.flow_pattern`) and
whether :func:`heatloom.equipment.geometry.size_exchanger` sizes it with a geometry
(:attr:`ExchangerType.has_geometry`).  A new kind is added here, once, and given its relations in
:mod:`heatloom.equipment` (ε-NTU and LMTD in :mod:`~heatloom.equipment.rating` and
:mod:`~heatloom.equipment.sizing` through its flow pattern, a geometry in
:mod:`~heatloom.equipment.geometry` if it has one).  The values are those written in JSON and CSV files.
"""

from __future__ import annotations

import enum

__all__ = ["ExchangerType"]


class ExchangerType(enum.Enum):
    """Kinds of heat exchanger: their flow pattern and whether a geometry is sized for them.

    Examples
    --------
    >>> ExchangerType("double_pipe").flow_pattern
    <ExchangerType.COUNTER_CURRENT: 'counter_current'>
    >>> [k.value for k in ExchangerType if k.has_geometry]
    ['shell_and_tube_1_2', 'double_pipe']
    """

    COUNTER_CURRENT = "counter_current"
    """Pure counter-current flow (the hot inlet meets the cold outlet); no geometry."""
    CO_CURRENT = "co_current"
    """Co-current (parallel) flow (the two inlets meet); no geometry."""
    SHELL_AND_TUBE_1_2 = "shell_and_tube_1_2"
    """One shell pass, an even number of tube passes; N such shells may be in series.  Sized as shells."""
    DOUBLE_PIPE = "double_pipe"
    """Double pipe (hairpins): counter-current flow, sized as hairpins."""

    @property
    def flow_pattern(self) -> ExchangerType:
        """The kind whose LMTD, F-factor and ε-NTU relations apply to this one.

        ``DOUBLE_PIPE`` flows counter-current, so its relations are those of ``COUNTER_CURRENT``; every
        other kind is its own flow pattern.
        """
        return ExchangerType.COUNTER_CURRENT if self is ExchangerType.DOUBLE_PIPE else self

    @property
    def has_geometry(self) -> bool:
        """Whether :func:`heatloom.equipment.geometry.size_exchanger` sizes this kind with a geometry
        (shells in series, hairpins); the others are sized by their area alone."""
        return self in (ExchangerType.SHELL_AND_TUBE_1_2, ExchangerType.DOUBLE_PIPE)
