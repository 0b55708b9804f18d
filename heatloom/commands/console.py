"""Console tables: columns as wide as their widest cell, so no name is ever cut.

Every command's summary prints its tables through :func:`text_table`: a header line, a units line, then one
line per row. A column is as wide as the widest of its header, its unit and its cells, so a long stream or
utility name ("cooling tower water, north bank") widens its column instead of being truncated.
"""

from __future__ import annotations

from collections.abc import Callable, Sequence
from dataclasses import dataclass

__all__ = ["Column", "text_table"]


@dataclass(frozen=True)
class Column:
    """One column of a console table.

    Parameters
    ----------
    header : str
        Column heading.
    unit : str, optional
        Unit written under the heading, e.g. ``"[kW]"``; empty for text columns.
    spec : str or callable, optional
        Format of a number cell: a format spec (``",.1f"``) or a function of the value; text cells are
        written as they are and ``None`` as ``"-"``.
    align : str, optional
        ``"<"`` (text, the default when ``spec`` is empty) or ``">"`` (numbers).
    """

    header: str
    unit: str = ""
    spec: str | Callable[[object], str] = ""
    align: str = ""

    def cell(self, value) -> str:
        """The text of one cell."""
        if value is None:
            return "-"
        if isinstance(value, str):
            return value
        if callable(self.spec):
            return self.spec(value)
        return format(value, self.spec)

    @property
    def alignment(self) -> str:
        return self.align or (">" if self.spec else "<")


def text_table(columns: Sequence[Column], rows: Sequence[Sequence], *, indent: str = "  ") -> list[str]:
    """Lines of a table whose columns fit their widest cell.

    Parameters
    ----------
    columns : sequence of Column
    rows : sequence of sequences
        One value per column in each row.
    indent : str, optional
        Written before every line.

    Examples
    --------
    >>> cols = [Column("utility"), Column("duty", "[kW]", ",.1f")]
    >>> print("\\n".join(text_table(cols, [["cooling tower water, north bank", 1234.56], ["steam", None]])))
      utility                            duty
                                         [kW]
      cooling tower water, north bank 1,234.6
      steam                                 -
    """
    texts = [[c.cell(v) for c, v in zip(columns, row, strict=True)] for row in rows]
    widths = [max([len(c.header), len(c.unit)] + [len(t[k]) for t in texts]) for k, c in enumerate(columns)]

    def line(cells: Sequence[str]) -> str:
        return (indent + " ".join(f"{text:{c.alignment}{w}}" for c, w, text in zip(columns, widths, cells))).rstrip()

    out = [line([c.header for c in columns])]
    if any(c.unit for c in columns):
        out.append(line([c.unit for c in columns]))
    out += [line(t) for t in texts]
    return out
