"""Reverse transformers from reversed pipelines against the ones PROJ finds itself (pyproj)."""

import numpy as np
import pytest
from pyproj import CRS, Transformer

from geo.airfield.frame import RunwayFrame, _transformers, frame_transformer
from geo.airfield.transformers import inverse_transformer, onward_pipeline, reversed_pipeline

# Thresholds: the demo's, one with every digit used, the southern and eastern hemispheres.
ORIGINS = [(46.35, -101.2), (46.123456789012345, -101.98765432109876), (-33.9461, 151.1772), (64.1, -21.9)]
# DEM CRSs: UTM north and south, geographic 2D and 3D, web Mercator, Lambert-93, NAD83 UTM, a
# compound CRS; then ones with datum shifts, where PROJ is asked as before (OSGB36, NAD83, ETRS89-LAEA).
OTHERS = [
    "EPSG:32614",
    "EPSG:32756",
    "EPSG:4326",
    "EPSG:4979",
    "EPSG:3857",
    "EPSG:2154",
    "EPSG:26914",
    "EPSG:4326+5773",
]
SHIFTED = ["EPSG:27700", "EPSG:4269", "EPSG:3035"]


def _points(lat0, lon0, n=2000):
    rng = np.random.default_rng(7)
    return lon0 + rng.uniform(-0.2, 0.2, n), lat0 + rng.uniform(-0.2, 0.2, n)


@pytest.mark.parametrize("lat0, lon0", ORIGINS)
@pytest.mark.parametrize("other", OTHERS)
def test_reversed_pipeline_is_the_one_proj_finds(lat0, lon0, other):
    # Reference: pyproj's own Transformer.from_crs the other way; same text, hence the same figures.
    local, crs = _transformers(lat0, lon0)[0], CRS(other)
    for source, target in ((local, crs), (crs, local)):
        forward = Transformer.from_crs(source, target, always_xy=True)
        found = Transformer.from_crs(target, source, always_xy=True)
        assert reversed_pipeline(forward.definition) == found.definition


@pytest.mark.parametrize("lat0, lon0", ORIGINS)
def test_frame_transformers_bit_for_bit(lat0, lon0):
    # Reference: transformers pyproj finds from the CRSs each way (the code before this module).
    from pyproj.crs import GeographicCRS

    lon, lat = _points(lat0, lon0)
    local, forward, inverse = _transformers(lat0, lon0)
    assert GeographicCRS().to_json() == GeographicCRS(datum="WGS84").to_json()  # the same WGS 84
    found = Transformer.from_crs(GeographicCRS(datum="WGS84"), local, always_xy=True)
    assert forward.definition == found.definition
    east, north = forward.transform(lon, lat)
    for a, b in zip((east, north), found.transform(lon, lat)):
        assert np.array_equal(a, b)
    reference = Transformer.from_crs(local, GeographicCRS(datum="WGS84"), always_xy=True)
    for a, b in zip(inverse.transform(east, north), reference.transform(east, north)):
        assert np.array_equal(a, b)
    frame = RunwayFrame(lat0, lon0, lat0 + 0.001, lon0 - 0.03)
    import rasterio.crs

    wkts = [CRS(other).to_wkt() for other in OTHERS + SHIFTED + ["ESRI:54009", "EPSG:3031"]]
    wkts += [
        rasterio.crs.CRS.from_string(c).to_wkt() for c in ("EPSG:32614", "EPSG:3857", "EPSG:26914")
    ]  # GDAL's WKT 1
    for wkt in wkts:
        x, y = frame_transformer(frame, wkt).transform(east, north)
        onward = Transformer.from_crs(local, CRS(wkt), always_xy=True)
        assert frame_transformer(frame, wkt).definition == onward.definition
        for a, b in zip((x, y), onward.transform(east, north)):
            assert np.array_equal(a, b, equal_nan=True)
        found = Transformer.from_crs(CRS(wkt), local, always_xy=True)
        for a, b in zip(frame_transformer(frame, wkt, inverse=True).transform(x, y), found.transform(x, y)):
            assert np.array_equal(a, b, equal_nan=True)


def test_frame_forward_is_the_one_proj_finds_anywhere():
    # Reference: pyproj's Transformer.from_crs from WGS 84 to the frame's CRS, at 60 random
    # thresholds with every digit used (PROJ writes 15 significant digits in its pipelines).
    from pyproj.crs import GeographicCRS

    rng = np.random.default_rng(11)
    for lat0, lon0 in zip(rng.uniform(-85.0, 85.0, 60), rng.uniform(-180.0, 180.0, 60)):
        local, forward, inverse = _transformers(float(lat0), float(lon0))
        found = Transformer.from_crs(GeographicCRS(datum="WGS84"), local, always_xy=True)
        assert forward.definition == found.definition
        assert (
            inverse.definition == Transformer.from_crs(local, GeographicCRS(datum="WGS84"), always_xy=True).definition
        )


def test_not_reversed_where_unsure():
    # Datum shifts, several candidate operations, other axis orders: left to PROJ (None).
    local = _transformers(46.35, -101.2)[0]
    for other in SHIFTED:
        assert reversed_pipeline(Transformer.from_crs(local, CRS(other), always_xy=True).definition) is None
    assert reversed_pipeline("proj=pipeline step proj=axisswap order=2,1,3 step proj=utm zone=14") is None
    assert reversed_pipeline("proj=pipeline step proj=helmert x=1 step proj=utm zone=14") is None
    assert reversed_pipeline("proj=utm zone=14 ellps=WGS84") is None
    assert reversed_pipeline("") is None
    # A by-hand reversal: projections swap their direction, unit steps their units.
    assert (
        reversed_pipeline(
            "proj=pipeline step proj=unitconvert xy_in=deg xy_out=rad step proj=tmerc lat_0=1 ellps=GRS80"
        )
        == "proj=pipeline step inv proj=tmerc lat_0=1 ellps=GRS80 step proj=unitconvert xy_in=rad xy_out=deg"
    )


def test_inverse_transformer_falls_back_to_proj():
    # OSGB36 has a Helmert shift from WGS 84: the reverse transformer is the one PROJ finds (pyproj).
    source, target = CRS("EPSG:4326"), CRS("EPSG:27700")
    forward = Transformer.from_crs(source, target, always_xy=True)
    back = inverse_transformer(forward, source, target)
    assert back.definition == Transformer.from_crs(target, source, always_xy=True).definition


def test_onward_only_on_one_datum():
    # Projected CRSs on other datums (Lambert-93 on RGF93, NAD83 UTM, OSGB36), geographic and
    # compound CRSs: left to PROJ (None). On WGS 84: the pipeline PROJ finds (pyproj).
    lat0, lon0 = 46.35, -101.2
    local, forward, _ = _transformers(lat0, lon0)
    for other in ("EPSG:2154", "EPSG:26914", "EPSG:27700", "EPSG:4326", "EPSG:32614+5773"):
        assert onward_pipeline(forward.definition, local, CRS(other)) is None
    found = Transformer.from_crs(local, CRS("EPSG:32614"), always_xy=True)
    assert onward_pipeline(forward.definition, local, CRS("EPSG:32614")) == found.definition
