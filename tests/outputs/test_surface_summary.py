"""``summary.json``: the surface path against its limits and the ground beyond the integration area."""

import json
import math

import pytest

from geo.outputs.summary import summary_dict
from geo.site.site_file import load_site
from geo.study.site_study import run_study
from geo.units import M_PER_FT

#: Annex 10 Vol I 3.1.5.1.2.2 (from memory; confirm against the edition in force): Cat I within 0.075 theta.
CAT_I_TOLERANCE = 0.075
#: Annex 10 Vol I 3.1.5.7.1 a) (from memory): monitor alarm beyond -0.075 theta / +0.10 theta.
MONITOR = (-0.075, 0.10)


@pytest.fixture(scope="module")
def demo():
    from demo_airfield import SITE_FILE

    result = run_study(load_site(SITE_FILE))
    return result, json.loads(json.dumps(summary_dict(result)))


def test_the_surface_block_gives_the_figures_and_their_margins(demo):
    result, summary = demo
    block = summary["prediction"]["surface"]["against_limits"]
    theta = result.spec.angle_deg
    angle = block["path_angle"]
    fitted = math.degrees(math.atan(result.surface.straight_fit[1]))  # the fit's slope as an angle
    assert angle["value_deg"] == pytest.approx(fitted, abs=1e-6)
    assert angle["far_field_deg"] == pytest.approx(result.surface.path_angle_deg, abs=1e-6)
    assert angle["error_deg"] == pytest.approx(fitted - theta, abs=1e-6)
    tolerance, monitor = angle["limits"]
    # Margins worked out here from the Annex values, to the limit on the error's side.
    error = fitted - theta
    assert tolerance["margin_deg"] == pytest.approx(CAT_I_TOLERANCE * theta - abs(error), abs=1e-6)
    monitor_side = MONITOR[1] if error >= 0 else -MONITOR[0]
    assert monitor["margin_deg"] == pytest.approx(monitor_side * theta - abs(error), abs=1e-6)
    assert monitor["share_of_allowance_left"] == pytest.approx(1 - abs(error) / (monitor_side * theta), abs=1e-4)
    assert "from memory" in tolerance["source"] and "3.1.5.7.1" in monitor["source"]
    # The RDH: the surface path's fit over the threshold, in metres and feet.
    rdh = block["rdh"]
    expected = result.surface.straight_fit[0] + result.mast.plane_elevation_m - result.spec.threshold.elevation_m
    assert rdh["value_m"] == pytest.approx(expected, abs=1e-4)
    assert rdh["value_ft"] == pytest.approx(expected / M_PER_FT, abs=1e-3)
    assert rdh["limits"][0]["margin_ft"] == pytest.approx(rdh["limits"][0]["margin_m"] / M_PER_FT, abs=1e-3)
    below, above = block["half_sector_below"]["value_deg"], block["half_sector_above"]["value_deg"]
    assert block["asymmetry"]["value"] == pytest.approx((above - below) / (above + below), abs=1e-4)
    assert "flight inspection" in block["caution"] and "local regulations" in block["caution"]
    # The findings say the same severities.
    codes = {f.code: f.severity for f in result.findings}
    assert codes["surface-path-angle"] == angle["severity"] and codes["surface-rdh"] == rdh["severity"]


def test_the_ground_beyond_the_area_is_in_the_summary(demo):
    result, summary = demo
    beyond = summary["prediction"]["surface"]["ground_beyond_area"]
    area_far_edge = result.surface.area_m[1]
    assert beyond["from_before_threshold_m"] == pytest.approx(area_far_edge - result.mast.setback_m, abs=1e-3)
    # Rayleigh limit lambda / (8 sin psi) at the plane's grazing angle (Beckmann and Spizzichino 1963).
    limit = result.wavelength_m / (8 * math.sin(math.radians(result.terrain.grazing_deg)))
    assert beyond["limit_m"] == pytest.approx(limit, abs=1e-4)
    assert beyond["beyond_limit"] == (abs(beyond["largest_departure_m"]) > limit)
    severity = {f.code: f.severity for f in result.findings}["surface-ground-beyond"]
    assert severity == ("warning" if beyond["beyond_limit"] else "info")
