"""Every study layer in one GeoPackage (``site.gpkg``), one table per layer, WGS 84.

Written with pyogrio's low-level writer straight from the GeoJSON FeatureCollections (no pandas
on the way), with a fixed change date so that equal inputs give equal files.

References
----------
.. [1] OGC 12-128r18, OGC GeoPackage Encoding Standard 1.3.
"""

from __future__ import annotations

from pathlib import Path

import numpy as np

__all__ = ["write_gpkg"]

_FIXED_DATE = "2000-01-01T00:00:00.000Z"


def _column(values: list):
    present = [v for v in values if v is not None]
    if present and all(isinstance(v, bool) for v in present):
        return np.array([bool(v) if v is not None else False for v in values])
    if present and all(isinstance(v, int) and not isinstance(v, bool) for v in present) and len(present) == len(values):
        return np.array(values, dtype=np.int64)
    if present and all(isinstance(v, (int, float)) and not isinstance(v, bool) for v in present):
        return np.array([float(v) if v is not None else np.nan for v in values], dtype=np.float64)
    return np.array([None if v is None else str(v) for v in values], dtype=object)


def write_gpkg(layers: dict[str, dict], path: Path) -> None:
    """Write the GeoJSON FeatureCollections as GeoPackage layers [1]_.

    Parameters
    ----------
    layers : dict
        FeatureCollections by layer name.
    path : Path
    """
    import pyogrio.raw
    import shapely
    import shapely.geometry

    pyogrio.set_gdal_config_options({"OGR_CURRENT_DATE": _FIXED_DATE})
    try:
        for name, fc in layers.items():
            features = fc["features"]
            geoms = [shapely.geometry.shape(f["geometry"]) for f in features]  # no JSON text on the way
            keys = list(dict.fromkeys(k for f in features for k in f["properties"]))
            columns = [_column([f["properties"].get(k) for f in features]) for k in keys]
            kinds = {g.geom_type for g in geoms}
            geometry_type = kinds.pop() if len(kinds) == 1 else "Unknown"
            if geometry_type == "Polygon" and any(g.geom_type == "MultiPolygon" for g in geoms):
                geometry_type = "MultiPolygon"
            pyogrio.raw.write(
                str(path),
                shapely.to_wkb(geoms),
                columns,
                keys,
                layer=name,
                driver="GPKG",
                crs="EPSG:4326",
                geometry_type=geometry_type,
                append=path.exists(),
            )
    finally:
        pyogrio.set_gdal_config_options({"OGR_CURRENT_DATE": None})
