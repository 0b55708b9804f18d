"""The lowest-TAC design never returns a network dearer than the MER network it starts from.

Invented data (shrunk from a generated robustness case): a hot stream H5 289.7 → 203.3 °C and a cold stream C2
that boils over 1 K at 125 °C, then heats to 208.4 °C; four hot utility levels and cooling water.  The MER
design at ΔTmin 10 K preheats C2 with LP and MP steam before H5 takes it to its target; the stagewise form of
the TAC search puts utility units at the stream ends only, so it could not hold that network and ended on
dearer steam and hot oil.  The expected cost is the MER network's own (costed by the same laws), and
check_network, independent of the search, checks the returned network at EMAT with the contributions.
"""

from heatloom.model import Segment, Stream, StreamTable, Utility, UtilityKind
from heatloom.network.design import design_mer
from heatloom.network.structure import check_network
from heatloom.network.tac.search import design_tac


def problem():
    streams = StreamTable((
        Stream("H5", (Segment(289.7, 203.3, 6.3, 1.4, 4.0),)),
        Stream("C2", (Segment(125.0, 126.0, 252.4, 4.4, 4.0), Segment(126.0, 208.4, 12.2, 1.2, 4.0)))))
    utilities = [Utility("hot oil", 360, 310, 260.0, UtilityKind.HOT, 1.0),
                 Utility("HP steam", 300, 299, 220.0, UtilityKind.HOT, 4.0),
                 Utility("MP steam", 200, 199, 150.0, UtilityKind.HOT, 4.0),
                 Utility("LP steam", 150, 149, 110.0, UtilityKind.HOT, 4.0),
                 Utility("cooling water", 20, 30, 12.0, UtilityKind.COLD, 1.5)]
    return streams, utilities


def test_the_mer_network_is_returned_when_no_stagewise_network_is_cheaper():
    streams, utilities = problem()
    mer = design_mer(streams, 10.0, utilities)
    # the MER network preheats C2 with steam before the exchanger: no stagewise form with heaters at the end
    x = next(e for e in mer.exchangers if e.cold == "C2")
    assert all(h.cold_out <= x.cold_in + 1e-9 for h in mer.heaters)
    net = design_tac(streams, utilities, seed=0, starts=1, rounds=4, workers=1, time_limit=60)
    assert net.total_annual_cost <= mer.total_annual_cost * (1 + 1e-9)
    check_network(net, streams, utilities, dt_min=1.0, contributions=True)
    assert net.dt_min == 1.0
    assert any(n.startswith("the starting MER network (ΔTmin 10 K) costs") for n in net.notes)
    assert {h.utility for h in net.heaters} == {"LP steam", "MP steam"}
