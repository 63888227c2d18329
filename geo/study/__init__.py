"""One site, and many candidates (stage 6 of 7).

Validated inputs in, every result out, with the findings against the standards; no I/O.

Modules, in the order a study uses them:

- :mod:`geo.study.site_study`: :func:`~geo.study.site_study.run_study`: one site, every result
- :mod:`geo.study.array_setup`: the study's array over its plane, shared by every prediction
- :mod:`geo.study.designator`: ``runway.designator`` against the landing direction's magnetic bearing
- :mod:`geo.study.dem_checks`: the DEM at the threshold and the mast before the study
- :mod:`geo.study.dem_causes`: the site-file key behind a DEM that disagrees with the survey, and its fix
- :mod:`geo.study.tile_checks`: a DEM tile in the wrong unit (stops), tiles that disagree (warnings)
- :mod:`geo.study.surface`: the surface prediction of one study and its findings
- :mod:`geo.study.surface_sector`: the surface path's angle, half-sectors, asymmetry and RDH against
  the Annex 10 tolerances and monitor limits, with margins
- :mod:`geo.study.ground_beyond`: the ground beyond the surface prediction's area against the plane
- :mod:`geo.study.findings`: checks against the standards -> :class:`~geo.study.findings.Finding`, cautions
- :mod:`geo.study.sweep`: many candidate masts at once, each with its own terrain
- :mod:`geo.study.sweep_choice`: reasons in words, rank, near-feasible candidates
- :mod:`geo.study.solved_setbacks`: the setback meeting the target RDH at each side and offset
- :mod:`geo.study.sweep_surface`: the sweep's best candidates re-judged by the surface prediction

Imports go only to the stages below (``tests/test_layout.py``).
"""
