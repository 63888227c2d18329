"""Writers: turn a study's result into files (stage 7 of 7).

Writers only read the result (:class:`geo.study.site_study.StudyResult`, a sweep's, an areas
result); they never recompute. :mod:`geo.outputs.write` writes a whole study into a temporary
folder and moves it into place.
"""
