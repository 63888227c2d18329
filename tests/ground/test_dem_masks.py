"""Cells without data: GDAL's mask read without numpy's masked arrays, against rasterio's masked read."""

import numpy as np
import pytest
import rasterio
from rasterio.transform import from_origin
from rasterio.windows import Window

from geo.ground.tile import DemTile, valid_cells


def _raster(path, dtype, nodata, holes, mask_band=False):
    rng = np.random.default_rng(5)
    data = (600.0 + 20.0 * rng.random((40, 30))).astype(dtype)
    if holes is not None:
        data[holes] = nodata
    profile = dict(driver="GTiff", width=30, height=40, count=1, dtype=dtype, crs="EPSG:32614",
                   transform=from_origin(500_000.0, 5_100_000.0, 5.0, 5.0), nodata=nodata)  # fmt: skip
    with rasterio.open(path, "w", **profile) as ds:
        ds.write(data, 1)
        if mask_band:
            mask = np.full((40, 30), 255, dtype=np.uint8)
            mask[:5, :7] = 0
            ds.write_mask(mask)
    return path


CASES = [
    ("int16", -9999, (slice(3, 9), slice(4, 12)), False),  # a nodata value
    ("float32", float("nan"), (slice(10, 20), slice(0, 5)), False),  # NaN as nodata
    ("float32", None, None, False),  # every cell valid
    ("float32", None, None, True),  # an internal mask band
]


@pytest.mark.parametrize("dtype, nodata, holes, mask_band", CASES)
def test_valid_cells_and_windows_as_a_masked_read(tmp_path, dtype, nodata, holes, mask_band):
    # Reference: rasterio's read(masked=True), which applies the same GDAL mask through numpy.ma.
    path = _raster(tmp_path / "dem.tif", dtype, nodata, holes, mask_band)
    tile = DemTile.open(path, vertical_unit="ft")
    ds = tile.dataset
    for window in (Window(0, 0, 30, 40), Window(2, 1, 11, 13), Window(20, 30, 10, 10)):
        masked = ds.read(1, window=window, masked=True)
        expected = np.broadcast_to(~masked.mask, (int(window.height), int(window.width)))
        assert np.array_equal(valid_cells(ds, window), expected)
    gi, gj = np.meshgrid(np.arange(1.0, 30.0, 0.7), np.arange(1.0, 25.0, 0.9), indexing="ij")
    block, r0, c0 = tile._window(gi.ravel(), gj.ravel(), False)
    window = Window(c0, r0, block.shape[1], block.shape[0])
    reference = ds.read(1, window=window, masked=True).astype(np.float64).filled(np.nan) * tile.vertical_scale
    assert np.array_equal(block, reference, equal_nan=True)  # bit for bit, NaN where no data
    if holes is not None or mask_band:
        assert np.isnan(block).any()
    tile.close()
