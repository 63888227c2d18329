"""A study imports only what it computes with: no scipy, and none of the writers' libraries.

scipy.signal, scipy.ndimage and scipy.special cost about 1.5 s of imports a run; the recorder
filter, the denoiser's Gaussian and the knife-edge table are numpy. The writers' libraries load in
their own processes (geo.outputs.background).
"""

import subprocess
import sys

CODE = """
import sys
from geo.site.site_file import load_site
from geo.study.site_study import run_study
result = run_study(load_site("demo_airfield/site.toml"))
assert result.surface is not None
heavy = sorted(m for m in sys.modules if m.split(".")[0] in {"scipy", "matplotlib", "geopandas", "folium", "pandas"})
print(",".join(heavy) or "none")
"""


def test_the_demo_study_with_its_surface_prediction_imports_no_scipy_and_no_writer():
    done = subprocess.run([sys.executable, "-c", CODE], capture_output=True, text=True, timeout=600)
    assert done.returncode == 0, done.stderr
    assert done.stdout.strip().splitlines()[-1] == "none"
