"""Physical optics over real surfaces and objects (stage 5 of 7).

One facet kernel for every field: the ground in front of the mast, objects, derived areas.

Modules, in the order a study uses them:

- :mod:`geo.optics.kernel`: the field flat facets scatter from an antenna to receivers; its thread limits
- :mod:`geo.optics.surface_facets`: the ground as facets: integration areas, graded sampling, shadowing
- :mod:`geo.optics.surface_prediction`: the path over the DEM surface: DDM, sector, bends, convergence
- :mod:`geo.optics.objects`: objects near the mast as plates cut into facets
- :mod:`geo.optics.scatter_paths`: an object's field over the reflecting plane: the four ground paths
- :mod:`geo.optics.areas`: disturbance by objects on a grid, derived critical and sensitive areas

Imports go only to the stages below (``tests/test_layout.py``).
"""
