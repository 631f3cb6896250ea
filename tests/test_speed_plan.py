"""Speed work on the plan path that must not change a result: memoised timing, the solver's bounds."""

from planner.catalogue import builtin_catalogue
from planner.electrical import InverterTiming, Wave, inverter_edge
from planner.electrical.circuit import Load


def test_a_shared_threshold_memo_gives_the_same_edges():
    tube = builtin_catalogue().get("12AU7")
    divider = Load(820e3, 820e3, -90.0, tube)
    stage = InverterTiming(tube, 0.8, 170.0, 160e3, divider, ((2, divider),), 14e-12, 12e-12)
    other = InverterTiming(tube, 0.8, 170.0, 180e3, divider, ((1, divider),), 14e-12, 12e-12)
    thresholds: dict = {}
    for st in (stage, other, stage):
        for wave in (Wave(140.0, 12.0), Wave(12.0, 140.0), Wave(12.0, 140.0, "exponential", 2e-6)):
            assert inverter_edge(st, wave, 70.0, thresholds) == inverter_edge(st, wave, 70.0)
    assert set(thresholds) == {(stage, 70.0), (other, 70.0)}  # one threshold search per stage model
