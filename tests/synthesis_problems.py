"""Problem sets shared by tests/network/test_transshipment.py, tests/network/test_milp.py and the TAC tests.

Names of the published reference problems in tests/data/references/ (each file names its source, and the
tests repeat it beside every assertion), and a hypothesis strategy of invented problems used only for
property checks (importable by tests: the `pythonpath` setting of pytest puts tests/ on the path).
THIRTEEN and TWELVE are invented stream tables (the generated problems of benchmarks/bench_design.py,
written out) for the designs with hot oil.
"""

from hypothesis import strategies as st

from heatloom.model import Segment, Stream, StreamTable, Utility, UtilityKind

TARGETING = [
    "targeting_klemes_table_4_2",
    "targeting_ray_das_problem_5_1",
    "targeting_ray_das_problem_5_2_threshold",
    "targeting_ray_das_problem_5_4",
    "targeting_sinnott_four_stream",
]
SYNTHESIS_SMALL = [
    "synthesis_yee_grossmann_2h2c",
    "synthesis_colberg_morari_3h4c",
    "synthesis_aromatics_plant_4h5c",
]
SYNTHESIS = SYNTHESIS_SMALL + ["synthesis_fifteen_stream_8h7c"]


@st.composite
def problems(draw):
    n = draw(st.integers(2, 6))
    streams = []
    for i in range(n):
        a = draw(st.integers(0, 300))
        b = draw(st.integers(0, 300).filter(lambda x, a=a: abs(x - a) >= 2))
        cp = draw(st.integers(1, 100)) / 10
        contrib = draw(st.sampled_from([None, None, 0.0, 2.5, 8.0]))
        if draw(st.booleans()):   # two segments, as for a phase change or a varying CP
            mid = (a + b) / 2
            streams.append(Stream(f"S{i}", (Segment(a, mid, cp, None, contrib),
                                            Segment(mid, b, draw(st.integers(1, 100)) / 10, None, contrib))))
        else:
            streams.append(Stream.simple(f"S{i}", a, b, cp, dt_min_contribution=contrib))
    table = StreamTable(streams)
    prices = draw(st.lists(st.integers(1, 1000), min_size=4, max_size=4, unique=True))
    t_hot = draw(st.integers(0, 330))
    t_cold = draw(st.integers(-30, 300))
    glide = draw(st.sampled_from([0, 0, 5, 20]))
    levels = [Utility("top heater", 400, 380, prices[0] + 1000),      # dearest, hot enough for anything
              Utility("mid level", t_hot + glide, t_hot, prices[1], UtilityKind.HOT),
              Utility("chiller", -60, -50, prices[2] + 1000),          # dearest, cold enough for anything
              Utility("warm cooler", t_cold, t_cold + glide, prices[3], UtilityKind.COLD)]
    return table, draw(st.integers(0, 30)), levels


def segmented_problem():
    """Invented data: a vapour desuperheated, condensed and subcooled (three segments, each its own h), a
    second hot stream, two cold streams; steam and cooling water."""
    streams = StreamTable((
        Stream("vapour", (Segment(200, 150, 2.0, 1.0), Segment(150, 149, 100.0, 2.0), Segment(149, 60, 1.5, 0.8))),
        Stream.simple("H2", 170, 50, 1.0, film_coefficient=1.0),
        Stream.simple("feed", 30, 160, 2.5, film_coefficient=1.0),
        Stream.simple("C2", 80, 140, 1.5, film_coefficient=1.0)))
    utilities = [Utility("steam", 180, 179, 120.0, UtilityKind.HOT, 3.0),
                 Utility("water", 15, 25, 10.0, UtilityKind.COLD, 2.0)]
    return streams, utilities


# generated(13, 2) of benchmarks/bench_design.py (invented)
THIRTEEN = dict(
    names=["H1", "C1", "H2", "C2", "H3", "C3", "H4", "C4", "H5", "C5", "H6", "C6", "H7"],
    supply=[248.0, 61.0, 293.0, 175.0, 129.0, 113.0, 244.0, 90.0, 89.0, 77.0, 151.0, 118.0, 293.0],
    target=[214.0, 180.0, 148.0, 284.0, 85.0, 274.0, 234.0, 244.0, 41.0, 93.0, 137.0, 195.0, 138.0],
    cp=[17.9, 36.2, 39.3, 1.9, 27.2, 23.9, 18.7, 13.7, 18.5, 2.9, 45.1, 2.3, 39.0])

# generated(12, 0) of benchmarks/bench_design.py (invented)
TWELVE = dict(
    names=["H1", "C1", "H2", "C2", "H3", "C3", "H4", "C4", "H5", "C5", "H6", "C6"],
    supply=[285.0, 85.0, 271.0, 50.0, 280.0, 208.0, 282.0, 81.0, 238.0, 26.0, 137.0, 224.0],
    target=[90.0, 118.0, 260.0, 92.0, 151.0, 285.0, 38.0, 134.0, 76.0, 285.0, 111.0, 276.0],
    cp=[10.3, 33.9, 1.1, 21.4, 13.7, 46.2, 32.8, 39.9, 7.6, 7.6, 9.3, 30.4])


OIL_AND_WATER_CSV = "name,T_supply,T_target,cost,h\noil,330,250,60,1.0\nCW,10,15,6,1.5\n"
"""Invented utility table: hot oil 330 → 250 °C and cooling water 10 → 15 °C."""


def write_streams_csv(path, d, h: float = 0.5) -> None:
    """One of the tables above (names, supply, target, cp) as a stream-table CSV with film coefficient h."""
    rows = ["name,T_supply,T_target,CP,h"] + [f"{n},{a},{b},{c},{h}" for n, a, b, c in
                                             zip(d["names"], d["supply"], d["target"], d["cp"])]
    path.write_text("\n".join(rows) + "\n", encoding="utf-8")
