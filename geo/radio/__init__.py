"""The radio over a reflecting plane (stage 2 of 7).

Image arrays, ground reflection, Fresnel zones and the image-theory path: formulas on a plane,
numbers in, numbers out.

Modules, in the order a study uses them:

- :mod:`geo.radio.arrays`: image-array types: heights, proximity shifts, feeds
- :mod:`geo.radio.reflection`: ground reflection coefficient (horizontal polarisation)
- :mod:`geo.radio.fresnel`: first Fresnel zones on a plane: far-field closed form and exact quadric sections
- :mod:`geo.radio.zones`: receivers along the approach and the united reflection zones per antenna
- :mod:`geo.radio.prediction`: CSB / SBO by image theory, DDM, predicted path and sector
- :mod:`geo.radio.below_path`: the DDM below the path against Annex 10
- :mod:`geo.radio.clearance`: capture-effect clearance transmitter and two-carrier capture
- :mod:`geo.radio.knife_edge`: single knife-edge diffraction (ITU-R P.526), F(v), J(v), the strip factor over ground
- :mod:`geo.radio.bend_filter`: the flight-inspection recorder's low-pass filter and its response to a bend
- :mod:`geo.radio.structure`: path bends about each segment's mean path (line or mean), 95 % amplitude, raw departure
- :mod:`geo.radio.structure_limits`: Annex 10 structure limits by approach segment

Imports go only to the stages below (``tests/test_layout.py``).
"""
