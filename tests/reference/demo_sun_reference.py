"""Sun geometry for the demo site on the demo test day, from pvlib's NREL SPA implementation.

Source: pvlib.solarposition.spa_python (Reda & Andreas, NREL/TP-560-34302), numpy backend.
Output: tests/fixtures/demo_sun_pvlib.csv, used by tests/engine_demo.rs to check the sun columns
the engine attaches to every sample. Run once: python3 tests/reference/demo_sun_reference.py
The demo site "Larkfield Meadow (demo)" is invented (see src/sky/mod.rs, demo_site()).
"""
import sys
import numpy as np
import pandas as pd
import pvlib

LAT, LON, ELEV = 43.2170, 5.4420, 210.0
START = pd.Timestamp("2026-06-14T07:30:00Z")

times = START + pd.to_timedelta(np.arange(0, 2 * 3600 + 1, 30), unit="s")
pos = pvlib.solarposition.spa_python(times, LAT, LON, altitude=ELEV)
out = "tests/fixtures/demo_sun_pvlib.csv"
with open(out, "w") as f:
    f.write(f"# pvlib {pvlib.__version__}, numpy {np.__version__}, pandas {pd.__version__}, python {sys.version.split()[0]}\n")
    f.write("# spa_python defaults: pressure 101325 Pa, temperature 12 C, delta_t 67 s, atmos_refract None (0.5667 deg inside SPA)\n")
    f.write("t_s,azimuth_deg,apparent_elevation_deg\n")
    for t, az, el in zip(times, pos["azimuth"], pos["apparent_elevation"]):
        f.write(f"{(t - START).total_seconds():.0f},{az:.6f},{el:.6f}\n")
print("wrote", out, len(times), "rows")
