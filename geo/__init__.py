"""mastplan library: siting studies for ILS glide path image arrays.

The package is light to import; heavy modules (pyproj, shapely, geopandas,
rasterio, matplotlib, folium) are imported by the modules that need them.
The library never prints and never exits: results are returned, problems are
raised as subclasses of :class:`geo.errors.MastplanError`.
"""

__version__ = "0.1.0"

__all__ = ["__version__"]
