"""The real ground as numbers (stage 3 of 7).

DEM rasters and tiles in the survey's datum, and the reflecting plane fitted to them in the
reflection zones of :mod:`geo.radio`.

Modules, in the order a study uses them:

- :mod:`geo.ground.tile`: one raster: opening, checks, windows, bilinear sampling; the only raster reader
- :mod:`geo.ground.mosaic`: tiles as one surface, exact across seams
- :mod:`geo.ground.tile_agreement`: how far tiles disagree in overlaps and across seams, height ratios
- :mod:`geo.ground.dem`: :class:`~geo.ground.dem.Dem`: one raster or tiles, heights in the survey's datum
- :mod:`geo.ground.vertical_datum`: EGM96 / EGM2008 / WGS 84 conversions of DEM heights
- :mod:`geo.ground.display`: tiles warped onto one grid for the map's hillshade
- :mod:`geo.ground.hillshade`: hillshade of a height grid
- :mod:`geo.ground.profile`: terrain and path along the extended centre line
- :mod:`geo.ground.zone_grid`: the runway-frame sample grid and the fit zone row by row
- :mod:`geo.ground.plane_solve`: the forward slope as a fixed point, for many candidates at once
- :mod:`geo.ground.terrain`: the reflecting plane in the zones, its slope solved with the heights
- :mod:`geo.ground.roughness`: Rayleigh, Fraunhofer and IEV criteria per receiver family
- :mod:`geo.ground.denoise`: the DEM's cell-scale noise shrunk out of the geometry, counted as roughness

Imports go only to the stages below (``tests/test_layout.py``).
"""
