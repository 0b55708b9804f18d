"""Which file of a case folder plays which role: one rule for every command (a reader of folder listings).

A file's role follows from a keyword in its name (case ignored) and its suffix (:data:`CASE_SUFFIXES`):
``streams``, ``utilities``, ``costs``, ``network`` (an existing network), ``mains`` and ``prices``.
Writers use the same rule the other way round (:func:`case_role`): no output of heatloom takes a name that a
case folder would read as an input.
"""

from __future__ import annotations

from collections.abc import Collection
from pathlib import Path

from ..errors import InputError

__all__ = ["CASE_SUFFIXES", "case_candidates", "case_role"]

_TABLE_SUFFIXES = (".csv", ".xlsx", ".xlsm")

CASE_SUFFIXES = {"streams": _TABLE_SUFFIXES, "utilities": _TABLE_SUFFIXES,
                 "costs": (".json", ".yaml", ".yml", ".xlsx", ".xlsm"), "network": _TABLE_SUFFIXES,
                 "mains": _TABLE_SUFFIXES, "prices": _TABLE_SUFFIXES}
"""Keyword found in a case folder's file name (case ignored) → the suffixes a file of that role may have."""


def case_candidates(folder: str | Path, keywords: Collection[str] = tuple(CASE_SUFFIXES)) -> dict[str, list[Path]]:
    """Every file of a case folder whose name holds one of the keywords, by keyword (no check of counts).

    Only the folder's own files are looked at (not its subfolders, not hidden or lock files), with the
    suffixes of :data:`CASE_SUFFIXES`; keywords with no file are left out.

    Raises
    ------
    InputError
        The folder is missing, or a file's name fits two of the keywords.

    Examples
    --------
    >>> import tempfile, pathlib
    >>> d = pathlib.Path(tempfile.mkdtemp())
    >>> for n in ("east_streams.csv", "west_streams.csv", "mains.csv"):
    ...     _ = (d / n).write_text("x")
    >>> {k: [f.name for f in v] for k, v in case_candidates(d).items()}
    {'streams': ['east_streams.csv', 'west_streams.csv'], 'mains': ['mains.csv']}
    """
    folder = Path(folder)
    if not folder.is_dir():
        raise InputError("case folder not found", file=str(folder))
    found: dict[str, list[Path]] = {}
    for f in sorted(folder.iterdir()):
        if not f.is_file() or f.name.startswith((".", "~$")):
            continue
        name = f.stem.lower()
        keys = [k for k in keywords if k in name and f.suffix.lower() in CASE_SUFFIXES[k]]
        if len(keys) > 1:
            raise InputError(f"the name of {f.name} fits several roles ({', '.join(keys)}); rename it or give "
                             "the files one by one", file=str(folder))
        for k in keys:
            found.setdefault(k, []).append(f)
    return found


def case_role(name: str) -> str | None:
    """The role a file called ``name`` would play in a case folder (None: none).

    Examples
    --------
    >>> case_role("streams.csv"), case_role("east_streams.xlsx"), case_role("targets.json"), case_role("stream_table.csv")
    ('streams', 'streams', None, None)
    """
    p = Path(name)
    stem, suffix = p.stem.lower(), p.suffix.lower()
    return next((k for k, suffixes in CASE_SUFFIXES.items() if k in stem and suffix in suffixes), None)
