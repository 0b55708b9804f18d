"""Writing results: JSON, CSV and XLSX, never over anything the user gave.

Every writer goes through :class:`OutputDirectory`, which refuses to overwrite an existing file unless
asked to (``force``) and refuses, even then, to write over any of the input files of the run.
"""

from __future__ import annotations

import json
import math
from collections.abc import Iterable, Mapping
from pathlib import Path

import numpy as np

from ..errors import InputError

__all__ = ["OutputDirectory", "to_jsonable", "targets_workbook_sheets", "FIGURE_FORMATS"]

FIGURE_FORMATS = ("png", "svg")
"""Every figure is written in these formats."""


def to_jsonable(value):
    """Turn numpy scalars and arrays, enums and non-finite floats into plain JSON values.

    NaN and infinities become ``null`` (JSON has no such numbers).

    Examples
    --------
    >>> to_jsonable({"a": np.float64(1.5), "b": [np.int64(2), float("nan")]})
    {'a': 1.5, 'b': [2, None]}
    """
    if isinstance(value, Mapping):
        return {str(k): to_jsonable(v) for k, v in value.items()}
    if isinstance(value, (list, tuple)):
        return [to_jsonable(v) for v in value]
    if isinstance(value, np.ndarray):
        return to_jsonable(value.tolist())
    if isinstance(value, np.generic):
        return to_jsonable(value.item())
    if isinstance(value, float) and not math.isfinite(value):
        return None
    if hasattr(value, "value") and type(value).__module__.startswith("heatloom"):  # enums
        return value.value
    return value


class OutputDirectory:
    """A folder to write results into, with the overwrite rules of the project.

    Parameters
    ----------
    path : str or Path
        The folder; created when missing.
    protected : iterable of path
        Input files of the run: never written over, even with ``force``.
    force : bool
        Allow replacing files that already exist (other than protected ones).
    """

    def __init__(self, path, protected: Iterable = (), *, force: bool = False) -> None:
        self.path = Path(path)
        if self.path.exists() and not self.path.is_dir():
            raise InputError(f"--out {self.path} exists and is not a folder")
        self.protected = {Path(p).resolve() for p in protected}
        self.force = force
        self.written: list[Path] = []

    def _refuse(self, p: Path) -> None:
        if p.resolve() in self.protected:
            raise InputError(f"refusing to write {p}: it is one of the input files of this run")
        if p.exists() and not self.force:
            raise InputError(f"{p} already exists; choose another --out folder or pass --force to replace "
                             "heatloom's earlier results")

    def target(self, name: str) -> Path:
        """Check that ``name`` may be written and return its full path (creating the folder)."""
        p = self.path / name
        self._refuse(p)
        self.path.mkdir(parents=True, exist_ok=True)
        return p

    def check(self, names: Iterable[str]) -> None:
        """Check every name before anything is written, so a refused run leaves no partial output."""
        for n in names:
            self._refuse(self.path / n)

    def json(self, name: str, data) -> Path:
        p = self.target(name)
        p.write_text(json.dumps(to_jsonable(data), indent=2, ensure_ascii=False) + "\n", encoding="utf-8")
        self.written.append(p)
        return p

    def csv(self, name: str, frame) -> Path:
        p = self.target(name)
        frame.to_csv(p, index=False, encoding="utf-8")
        self.written.append(p)
        return p

    def workbook(self, name: str, sheets: Mapping[str, object]) -> Path:
        """Write an .xlsx with one sheet per frame, header row bold and frozen, columns sized."""
        from openpyxl.styles import Font

        p = self.target(name)
        import pandas as pd

        with pd.ExcelWriter(p, engine="openpyxl") as xw:
            for sheet, frame in sheets.items():
                frame.to_excel(xw, sheet_name=sheet[:31], index=False)
                ws = xw.sheets[sheet[:31]]
                ws.freeze_panes = "A2"
                for cell in ws[1]:
                    cell.font = Font(bold=True)
                for col in ws.columns:
                    width = max(len(str(c.value)) if c.value is not None else 0 for c in col)
                    ws.column_dimensions[col[0].column_letter].width = min(max(10, width + 2), 40)
                    for c in col[1:]:
                        if isinstance(c.value, float):
                            c.number_format = "0.000"
        self.written.append(p)
        return p

    def figure(self, name: str, fig) -> Path:
        p = self.target(name)
        fig.savefig(p, bbox_inches="tight", dpi=150 if p.suffix == ".png" else None)
        self.written.append(p)
        return p

    def figures(self, stem: str, fig) -> list[Path]:
        """Write ``fig`` as STEM.png and STEM.svg, then let go of it (:func:`heatloom.io.figures.close_figure`)."""
        from .figures import close_figure

        try:
            return [self.figure(f"{stem}.{ext}", fig) for ext in FIGURE_FORMATS]
        finally:
            close_figure(fig)


def targets_workbook_sheets(targets) -> dict:
    """Frames of a targeting run, one per workbook sheet (units in every header)."""
    import pandas as pd

    summary = pd.DataFrame([
        ("ΔTmin", targets.dt_min, "K"),
        ("minimum hot utility", targets.hot_utility, "kW"),
        ("minimum cold utility", targets.cold_utility, "kW"),
        ("heat recovery", targets.heat_recovery, "kW"),
        ("hot pinch temperature", targets.pinch.hot if targets.pinch else None, "°C"),
        ("cold pinch temperature", targets.pinch.cold if targets.pinch else None, "°C"),
        ("threshold", targets.threshold.value if targets.threshold else "no", ""),
    ], columns=["quantity", "value", "unit"])
    sheets = {"targets": summary, "streams": targets.streams.to_frame(),
              "problem table": targets.table.to_frame()}
    if targets.placement is not None:
        sheets["utilities"] = pd.DataFrame([{
            "name": d.utility.name, "kind": d.utility.kind.value,
            "T_supply [°C]": d.utility.supply_temperature, "T_target [°C]": d.utility.target_temperature,
            "price [money/(kW·year)]": d.utility.cost, "duty [kW]": d.duty,
            "annual cost [money/year]": d.annual_cost} for d in targets.placement.duties])
    curves = [targets.hot_composite(), targets.cold_composite(), targets.grand_composite()]
    sheets["curves"] = pd.concat([c.to_frame() for c in curves], axis=1)
    return sheets
