"""Structure limits by segment (ICAO Annex 10 Vol I 3.1.5.4 and 3.1.1; values from memory)."""

import math

import pytest

from geo.radio.structure_limits import structure_segments


def test_category_one_is_0035_to_point_c():
    # Annex 10 Vol I 3.1.5.4 (memory): Cat I 0.035 DDM from the coverage limit to ILS point C;
    # point C where the straight path is 30 m above the threshold (3.1.1, memory).
    segs = structure_segments("I", 15.0, 3.0)
    assert [s.name for s in segs] == ["coverage limit to A", "A to B", "B to C"]
    assert all(s.limit_from_ddm == s.limit_to_ddm == 0.035 for s in segs)
    assert segs[0].from_m == 10 * 1852.0 and segs[1].from_m == 4 * 1852.0 and segs[2].from_m == 1050.0
    assert segs[2].to_m == pytest.approx(15.0 / math.tan(math.radians(3.0)))


def test_category_two_falls_linearly_from_a_to_b():
    # Annex 10 Vol I 3.1.5.4 (memory): 0.035 DDM at A falling linearly to 0.023 DDM at B.
    segs = structure_segments("II", 15.0, 3.0)
    ab = segs[1]
    assert ab.limit_at(4 * 1852.0) == pytest.approx(0.035)
    assert ab.limit_at(1050.0) == pytest.approx(0.023)
    assert ab.limit_at((4 * 1852.0 + 1050.0) / 2) == pytest.approx(0.029)
    assert segs[2].to_m == 0.0 and segs[2].limit_at(500.0) == pytest.approx(0.023)
