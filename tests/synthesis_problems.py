"""Problem sets shared by tests/network/test_transshipment.py, tests/network/test_milp.py and the TAC tests.

Names of the published reference problems in tests/data/references/ (each file names its source, and the
tests repeat it beside every assertion), and a hypothesis strategy of invented problems used only for
property checks (importable by tests: the `pythonpath` setting of pytest puts tests/ on the path).
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
