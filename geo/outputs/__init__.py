"""Writers: turn a :class:`geo.study.StudyResult` into files.

Writers only read the result; they never recompute. :mod:`geo.outputs.write`
writes a whole study into a temporary folder and moves it into place.
"""
