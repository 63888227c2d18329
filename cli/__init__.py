"""The mastplan command line: a thin layer over the :mod:`geo` library."""
