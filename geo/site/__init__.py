"""The site file and the inputs of a study (stage 4 of 7).

Reads site files and batch inputs into validated, typed inputs with every length in metres, and
checks them against the catalogues of the stages below (array types, obstacle surface codes).

Modules, in the order a study uses them:

- :mod:`geo.site.site_file`: the only reader of site files: TOML -> validated :class:`~geo.site.site_file.SiteSpec`
- :mod:`geo.site.keys`: every key of every site-file table, the reader's list and the reference's source
- :mod:`geo.site.starter`: the text of a commented starter site file
- :mod:`geo.site.named_errors`: errors raised while a study runs get the site file's name in front
- :mod:`geo.site.channels`: the 40 localizer / glide path frequency pairs, the band, the wavelength
- :mod:`geo.site.batch`: a batch's jobs from site files and CSV rows, checked before anything is written

Imports go only to the stages below (``tests/test_layout.py``).
"""
