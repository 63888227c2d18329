"""The study summary as a plain dict (written as ``summary.json``).

Every length appears in metres and in feet: keys end in ``_m`` and gain an
``_ft`` twin through :func:`geo.units.with_foot_twins`.
"""

from __future__ import annotations

from pathlib import Path

from geo import __version__
from geo.findings import CAUTIONS
from geo.study import StudyResult
from geo.units import with_foot_twins

__all__ = ["summary_dict"]


def summary_dict(result: StudyResult) -> dict:
    """Key figures of a study, with foot twins, ready for JSON.

    Parameters
    ----------
    result : StudyResult

    Returns
    -------
    dict
        Stable key order; no timestamps, so equal inputs give equal output.
    """
    spec, runway, mast = result.spec, result.runway, result.mast
    body = {
        "site": {"name": spec.name, "notes": spec.notes},
        "tool": {"name": "mastplan", "version": __version__},
        "input": {
            "file": Path(spec.source).name if spec.source else "",
            "sha256": spec.sha256,
            "units": spec.units,
        },
        "frequency_mhz": result.channel.glide_path_mhz,
        "localizer_mhz": result.channel.localizer_mhz,
        "wavelength_m": result.wavelength_m,
        "path_angle_deg": spec.angle_deg,
        "array": spec.array,
        "category": spec.category,
        "runway": {
            "true_bearing_deg": runway.true_bearing_deg,
            "length_m": runway.length_m,
            "width_m": runway.width_m,
            "gradient_percent": runway.gradient * 100.0,
            "code": spec.runway_code,
            "threshold": {
                "lat": spec.threshold.lat_deg,
                "lon": spec.threshold.lon_deg,
                "elevation_m": spec.threshold.elevation_m,
            },
            "end": {"lat": spec.end.lat_deg, "lon": spec.end.lon_deg, "elevation_m": spec.end.elevation_m},
        },
        "mast": {
            "lat": mast.lat_deg,
            "lon": mast.lon_deg,
            "side": mast.side,
            "setback_m": mast.setback_m,
            "setback_source": mast.setback_source,
            "offset_m": mast.offset_m,
            "base_elevation_m": mast.base_elevation_m,
            "base_elevation_source": mast.base_elevation_source,
        },
        "antennas": [
            {
                "role": a.role,
                "height_m": a.height_m,
                "shift_toward_runway_m": a.shift_toward_runway_m,
                "offset_m": a.offset_m,
                "elevation_m": a.elevation_m,
                "lat": a.lat_deg,
                "lon": a.lon_deg,
            }
            for a in result.antennas
        ],
        "rdh_m": result.rdh_m,
        "target_rdh_m": spec.target_rdh_m,
        "path_height_over_threshold_m": result.path_height_over_threshold_m,
        "gpip": {
            "along_m": result.gpip.along_m,
            "elevation_m": result.gpip.elevation_m,
            "lat": result.gpip.lat_deg,
            "lon": result.gpip.lon_deg,
        },
        "findings": [{"code": f.code, "severity": f.severity, "message": f.message} for f in result.findings],
        "cautions": list(CAUTIONS),
    }
    return with_foot_twins(body)
