"""``[[building]]`` in the site file: footprints, claddings and one-line errors."""

import pytest

from geo.errors import SiteFileError
from geo.site.buildings import CLADDINGS, cladding_constants
from geo.site.site_file import parse_site
from tests.site.test_keys import base_doc

RECTANGLE = {"name": "Hangar 3", "centre": {"lat": 46.001, "lon": -100.01}, "length": 80, "width": 60, "height": 20}


def with_buildings(*buildings, units="m"):
    doc = base_doc()
    doc["units"] = units
    doc["building"] = list(buildings)
    return parse_site(doc)


def test_a_rectangle_and_a_polygon_are_read():
    outline = [{"lat": 46.002, "lon": -100.01}, {"lat": 46.002, "lon": -100.011}, {"lat": 46.003, "lon": -100.011}]
    spec = with_buildings(RECTANGLE, {"name": "Terminal", "footprint": outline, "height": 12, "cladding": "glass"})
    hangar, terminal = spec.buildings
    assert (hangar.length_m, hangar.width_m, hangar.height_m, hangar.cladding) == (80.0, 60.0, 20.0, "metal")
    assert hangar.footprint_deg is None and hangar.centre_deg == (46.001, -100.01)
    assert len(terminal.footprint_deg) == 3 and terminal.cladding == "glass"


def test_feet_are_converted_to_metres():
    # 1 ft = 0.3048 m exactly (international foot, 1959).
    spec = with_buildings({**RECTANGLE, "height": 100, "length": 200, "width": 100}, units="ft")
    assert spec.buildings[0].height_m == pytest.approx(30.48)
    assert spec.buildings[0].length_m == pytest.approx(60.96)


def test_cladding_constants_follow_the_p2040_form():
    # ITU-R P.2040-1 Table 3 (from memory): eps = a f^b, sigma = c f^d with f in GHz; metal a perfect conductor.
    spec = with_buildings({**RECTANGLE, "cladding": "concrete"}, {**RECTANGLE, "name": "B", "cladding": "metal"})
    eps, sigma = cladding_constants(spec.buildings[0], 330.0)
    assert eps == pytest.approx(5.24) and sigma == pytest.approx(0.0462 * 0.33**0.7822)
    assert cladding_constants(spec.buildings[1], 330.0) == (None, None)
    assert set(CLADDINGS) == {"metal", "concrete", "glass"}
    own = with_buildings({**RECTANGLE, "relative_permittivity": 4.0, "conductivity": 0.01}).buildings[0]
    assert cladding_constants(own, 330.0) == (4.0, 0.01) and own.constants_source == "site file"


@pytest.mark.parametrize(
    ("change", "field", "words"),
    [
        ({"height": 0}, "building 1.height", "greater than"),
        ({"height": None}, "building 1.height", "missing"),
        ({"cladding": "wood"}, "building 1.cladding", '"metal", "concrete" or "glass"'),
        ({"centre": None}, "building 1", "needs a footprint"),
        ({"length": 0.5}, "building 1.length", "at least"),
        ({"footprint": [{"lat": 46.0, "lon": -100.0}]}, "building 1.footprint", "not centre"),
        ({"relative_permittivity": 4.0}, "building 1.relative_permittivity", "both"),
        ({"colour": "red"}, "building 1.colour", "unknown key"),
    ],
)
def test_bad_buildings_are_one_line_errors(change, field, words):
    item = {k: v for k, v in {**RECTANGLE, **change}.items() if v is not None}
    with pytest.raises(SiteFileError) as caught:
        with_buildings(item)
    assert caught.value.field == field and words in str(caught.value) and "\n" not in str(caught.value)


def test_crossed_footprint_and_shared_names_are_refused():
    bow = [{"lat": 46.0, "lon": -100.0}, {"lat": 46.001, "lon": -100.001}, {"lat": 46.0, "lon": -100.001},
           {"lat": 46.001, "lon": -100.0}]  # fmt: skip
    with pytest.raises(SiteFileError, match="simple polygon"):
        with_buildings({"name": "Bow", "footprint": bow, "height": 5})
    with pytest.raises(SiteFileError, match="earlier building"):
        with_buildings(RECTANGLE, RECTANGLE)
    with pytest.raises(SiteFileError, match="3 to 200"):
        with_buildings({"name": "Dot", "footprint": bow[:2], "height": 5})
    assert with_buildings().buildings == ()
