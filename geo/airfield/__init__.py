"""The aerodrome's geometry, without radio (stage 1 of 7).

Coordinates in, coordinates and heights out; nothing here knows the site file.

Modules, in the order a study uses them:

- :mod:`geo.airfield.frame`: the runway frame (local transverse Mercator) and geodesics
- :mod:`geo.airfield.transformers`: pyproj transformers without PROJ's database search where the pipeline is known
- :mod:`geo.airfield.magnetic`: magnetic variation (World Magnetic Model, pygeomag) and runway designators
- :mod:`geo.airfield.path`: RDH, path over the threshold, GPIP, setback for a target RDH (pure formulas)
- :mod:`geo.airfield.surfaces`: Annex 14 obstacle free zone and transitional surface; mast clearance
- :mod:`geo.airfield.protected`: protected areas of the local rules against the computed zones

Imports go only to the stages below (``tests/test_layout.py``).
"""
