"""Trim heaters and coolers given without duty or area (issue 14, item 15): they take the rest of their stream.

A trim unit is a heater or cooler that is the last unit on its stream; in operation its utility flow is
controlled so the stream leaves at its target, so its duty is whatever the stream still needs.  The checks
are hand-computed energy balances, Q = CP·(T_target − T_in) over each stream (the first law, *common
practice*), on invented streams (invented data: a check of the balance, not of a published result).
"""

from __future__ import annotations

import pytest

from heatloom.errors import InputError
from heatloom.io.network_table import read_network
from heatloom.model import Stream, StreamTable, Utility
from heatloom.model.existing import OperatingMode
from heatloom.retrofit.existing import ExistingNetwork
from heatloom.retrofit.simulate import simulate

# invented streams: H1 gives 2.0·(150 − 60) = 180 kW, C1 takes 2.5·(120 − 30) = 225 kW
STREAMS = StreamTable([Stream.simple("H1", 150, 60, 2.0, film_coefficient=1.0),
                       Stream.simple("C1", 30, 120, 2.5, film_coefficient=1.0)])
UTILITIES = [Utility("steam", 180, 179, 100.0, film_coefficient=4.0),
             Utility("water", 20, 30, 10.0, film_coefficient=1.5)]
HEADER = "unit,hot,cold,area [m2],duty [kW],U [kW/m2K],hot_order,cold_order\n"


def network(tmp_path, body: str) -> ExistingNetwork:
    p = tmp_path / "network.csv"
    p.write_text(HEADER + body, encoding="utf-8")
    return ExistingNetwork.from_table(STREAMS, read_network(p), UTILITIES)


def test_trim_units_without_duty_or_area_take_the_rest_of_their_stream(tmp_path):
    # E1 states 100 kW; the trim heater ST1 and the trim cooler CW1 give neither duty nor area
    net = network(tmp_path, "E1,H1,C1,,100,,1,1\nST1,steam,C1,,,,,2\nCW1,H1,water,,,,2,\n")
    assert net.unit("ST1").mode is OperatingMode.TRIM and net.unit("CW1").mode is OperatingMode.TRIM
    assert net.unit("ST1").area is None and net.unit("ST1").duty is None
    assert net.total_area is None   # two areas unknown
    assert any("'ST1' given without duty or area" in n and "takes the rest" in n for n in net.notes)
    sim = simulate(net)
    # hand balance: E1 at the area its 100 kW implies still does 100 kW; the heater brings C1 from
    # 30 + 100/2.5 = 70 °C to 120 °C: 2.5·(120 − 70) = 125 kW; the cooler brings H1 from 150 − 100/2.0 = 100 °C
    # to 60 °C: 2.0·(100 − 60) = 80 kW
    assert sim.unit("E1").duty == pytest.approx(100.0, rel=1e-9)
    assert sim.unit("ST1").duty == pytest.approx(125.0, rel=1e-9)
    assert sim.unit("CW1").duty == pytest.approx(80.0, rel=1e-9)
    assert sim.hot_utility == pytest.approx(125.0, rel=1e-9)
    assert sim.cold_utility == pytest.approx(80.0, rel=1e-9)


def test_trim_unit_with_exchanger_given_by_area(tmp_path):
    # E1 by its area: ε-NTU decides its duty q; the trims take 225 − q and 180 − q (hand balance)
    net = network(tmp_path, "E1,H1,C1,3.0,,0.5,1,1\nST1,steam,C1,,,,,2\nCW1,H1,water,,,,2,\n")
    sim = simulate(net)
    q = sim.unit("E1").duty
    assert 0 < q < 180
    assert sim.unit("ST1").duty == pytest.approx(225.0 - q, rel=1e-9)
    assert sim.unit("CW1").duty == pytest.approx(180.0 - q, rel=1e-9)


@pytest.mark.parametrize(("body", "pattern"), [
    # an exchanger always needs an area or a duty
    ("E1,H1,C1,,,,1,1\nST1,steam,C1,,,,,2\nCW1,H1,water,,,,2,\n",
     r"row 2, column 'area \[m2\]': unit 'E1' has neither area nor duty; give one of them \(only a heater or "
     r"cooler that is the last unit on its stream may leave both empty: it takes the rest of the stream's duty\)"),
    # a cooler that is not last on its stream is no trim unit: the same rule, in the same words
    ("CW1,H1,water,,,,1,\nE1,H1,C1,4.0,,,2,1\nST1,steam,C1,,,,,2\n",
     r"row 2, column 'duty \[kW\]': cooler 'CW1' is not the last unit of stream 'H1' and has no duty"),
    ("ST0,steam,C1,,,,,1\nE1,H1,C1,4.0,,,1,2\nST1,steam,C1,,,,,3\n",
     r"row 2, column 'area \[m2\]': unit 'ST0' has neither area nor duty; give one of them \(only a heater or "
     r"cooler that is the last unit on its stream"),
    # stated duties that disagree with the trim at the end name the trim unit to leave empty
    ("E1,H1,C1,,100,,1,1\nCW1,H1,water,,50,,2,\n",
     r"row 3, column 'duty \[kW\]': unit 'CW1': the stated duties .* add up to 150 kW but the stream gives "
     r"180 kW .*leave the duty and area of the cooler 'CW1' empty to let it take the rest"),
])
def test_messages_agree(tmp_path, body, pattern):
    with pytest.raises(InputError, match=r"network\.csv, " + pattern):
        network(tmp_path, body)
