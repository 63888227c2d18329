"""Channels against FAA AIM Table 1-1-4 / ICAO Annex 10 Vol I 3.1.6.1."""

import pytest

from geo.site.channels import (
    CHANNEL_PAIRS_MHZ,
    channel_for_glide_path,
    channel_for_localizer,
    wavelength_m,
)

# FAA AIM 1-1-9, TBL 1-1-4 "Frequency Pairs Allocated for ILS" (seen), typed in column by
# column from the table, independently of the module's row-by-row list.
AIM_LOCALIZERS = [
    108.10,
    108.15,
    108.30,
    108.35,
    108.50,
    108.55,
    108.70,
    108.75,
    108.90,
    108.95,
    109.10,
    109.15,
    109.30,
    109.35,
    109.50,
    109.55,
    109.70,
    109.75,
    109.90,
    109.95,
    110.10,
    110.15,
    110.30,
    110.35,
    110.50,
    110.55,
    110.70,
    110.75,
    110.90,
    110.95,
    111.10,
    111.15,
    111.30,
    111.35,
    111.50,
    111.55,
    111.70,
    111.75,
    111.90,
    111.95,
]
AIM_GLIDE_PATHS = [
    334.70,
    334.55,
    334.10,
    333.95,
    329.90,
    329.75,
    330.50,
    330.35,
    329.30,
    329.15,
    331.40,
    331.25,
    332.00,
    331.85,
    332.60,
    332.45,
    333.20,
    333.05,
    333.80,
    333.65,
    334.40,
    334.25,
    335.00,
    334.85,
    329.60,
    329.45,
    330.20,
    330.05,
    330.80,
    330.65,
    331.70,
    331.55,
    332.30,
    332.15,
    332.90,
    332.75,
    333.50,
    333.35,
    331.10,
    330.95,
]


@pytest.mark.parametrize("loc, gp", list(zip(AIM_LOCALIZERS, AIM_GLIDE_PATHS)))
def test_all_40_pairs_both_ways(loc, gp):
    assert channel_for_localizer(loc).glide_path_mhz == pytest.approx(gp, abs=1e-9)
    assert channel_for_glide_path(gp).localizer_mhz == pytest.approx(loc, abs=1e-9)


def test_table_has_40_distinct_channels_on_the_150_khz_raster():
    # Annex 10 Vol I 3.1.5.2.1 / AIM 1-1-9 (seen): 40 channels, 329.15-335.00 MHz, 150 kHz apart.
    assert len(CHANNEL_PAIRS_MHZ) == 40
    gps = sorted(gp for _, gp in CHANNEL_PAIRS_MHZ)
    assert gps[0] == pytest.approx(329.15) and gps[-1] == pytest.approx(335.00)
    steps = [b - a for a, b in zip(gps, gps[1:])]
    assert all(s == pytest.approx(0.15, abs=1e-9) for s in steps)


def test_unpaired_in_band_and_out_of_band():
    # Band 328.6-335.4 MHz: Annex 10 Vol I 3.1.5.2.1 (seen).
    assert channel_for_glide_path(332.07).localizer_mhz is None
    assert not channel_for_glide_path(328.6).is_paired
    with pytest.raises(ValueError):
        channel_for_glide_path(335.5)
    with pytest.raises(KeyError):
        channel_for_localizer(108.20)  # an even tenth is a VOR frequency, not a localizer


def test_wavelength_is_c_over_f():
    # c = 299 792 458 m/s exactly (SI); 334.4 MHz -> 0.896509 m.
    assert wavelength_m(334.4) == pytest.approx(299_792_458 / 334.4e6, rel=1e-15)
    assert wavelength_m(334.4) == pytest.approx(0.896509, abs=1e-6)
