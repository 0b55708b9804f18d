"""Writing a stream table and reading it back gives the same table, through CSV and through XLSX.

A property test (hypothesis, fixed seed): any table of single-segment streams with names that include the
characters spreadsheets treat as formulas (=, +, -, @), optional film coefficients and ΔTmin contributions,
written by heatloom's own writer (heatloom.io.export.OutputDirectory) and read by its own reader, comes back
exactly: names, temperatures, CP, h and contributions, as the floats written (CSV: every float to the
last bit; XLSX: to the 16 significant digits openpyxl writes, ``"%.16g"`` in openpyxl 3.1's
``compat.strings.safe_string``, one more than a spreadsheet program shows).  The data are generated
(invented), and the check is the identity itself: nothing produced earlier by heatloom is compared against.
"""

import tempfile
from pathlib import Path

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from heatloom.io import read_streams
from heatloom.io.export import OutputDirectory
from heatloom.model import Segment, Stream, StreamTable

NAME = st.text(alphabet="abcXYZ019 -=+@'()/._", min_size=1, max_size=12).map(str.strip).filter(bool)
TEMPERATURE = st.floats(min_value=-50.0, max_value=900.0, allow_nan=False).map(lambda x: round(x, 6))
POSITIVE = st.floats(min_value=1e-3, max_value=1e5, allow_nan=False)


@st.composite
def stream_tables(draw):
    names = draw(st.lists(NAME, min_size=1, max_size=8, unique_by=str.casefold))
    streams = []
    for name in names:
        ts = draw(TEMPERATURE)
        tt = draw(TEMPERATURE.filter(lambda t, ts=ts: abs(t - ts) > 1e-3))
        h = draw(st.none() | POSITIVE)
        dtc = draw(st.none() | st.floats(min_value=0.0, max_value=50.0, allow_nan=False))
        streams.append(Stream(name, (Segment(ts, tt, draw(POSITIVE), h, dtc),)))
    return StreamTable(tuple(streams))


def _same(a: StreamTable, b: StreamTable, rel: float) -> None:
    def eq(x, y):
        return x == y if rel == 0 or x is None or y is None else x == pytest.approx(y, rel=rel, abs=0)

    assert [s.name for s in b] == [s.name for s in a]
    for x, y in zip(a, b, strict=True):
        (g,), (k,) = x.segments, y.segments
        assert eq(k.supply_temperature, g.supply_temperature) and eq(k.target_temperature, g.target_temperature)
        assert eq(k.heat_capacity_flow, g.heat_capacity_flow)
        assert eq(k.film_coefficient, g.film_coefficient)
        assert eq(k.dt_min_contribution, g.dt_min_contribution)


@pytest.mark.parametrize("suffix", ["csv", "xlsx"])
@settings(max_examples=40, deadline=None, derandomize=True)
@given(table=stream_tables())
def test_a_written_stream_table_reads_back_exactly(suffix, table):
    with tempfile.TemporaryDirectory() as d:
        out = OutputDirectory(Path(d))
        path = out.csv("table.csv", table.to_frame()) if suffix == "csv" else \
            out.workbook("table.xlsx", {"streams": table.to_frame()})
        _same(table, read_streams(path), 0.0 if suffix == "csv" else 1e-15)
