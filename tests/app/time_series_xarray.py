#!/usr/bin/python3
"""A time-series file opens in xarray with a working time index (CF decoding of `time`), and
scripts/plot draws its figures.

usage: time_series_xarray.py SOLSTRATA_BINARY EXPERIMENT_DIR
Exits 77 (ctest: skipped) when xarray is not installed.
"""
import os
import subprocess
import sys
import tempfile

try:
    import numpy as np
    import xarray as xr
except ImportError:
    print("xarray not installed: skipped")
    sys.exit(77)

binary, config = sys.argv[1], sys.argv[2]
with tempfile.TemporaryDirectory() as d:
    out = os.path.join(d, "week.h5")
    subprocess.run([binary, "run", os.path.join(config, "site_week_demo.yaml"), "-o", out, "-q"], check=True)
    ds = xr.open_dataset(out)
    # CF decoding turned the time coordinate into datetimes (UTC).
    assert np.issubdtype(ds["time"].dtype, np.datetime64), ds["time"].dtype
    assert ds.sizes["time"] == 168, ds.sizes
    # 2026-06-18T12:00+02:00 local is 10:00 UTC: select by label.
    noon = ds["global_horizontal_irradiance"].sel(time="2026-06-18T10:00:00")
    assert float(noon) > 500.0, float(noon)
    assert float(ds["sun_above_horizon"].sel(time="2026-06-18T00:00:00")) == 0.0
    # Daily totals on their own decoded axis; resampling the hourly steps gives a rough check.
    assert np.issubdtype(ds["day"].dtype, np.datetime64)
    daily = ds["daily_global_horizontal"]
    assert daily.attrs["units"] == "MJ m-2 day-1"
    hourly = float(ds["global_horizontal_irradiance"].sum()) * 3600 / 1e6
    assert abs(hourly - float(daily.sum())) / float(daily.sum()) < 0.01, (hourly, float(daily.sum()))
    ds.close()
    # The plotting helper draws the time series and the daily totals from the same file.
    plot = os.path.join(os.path.dirname(os.path.abspath(__file__)), "..", "..", "scripts", "plot")
    subprocess.run([sys.executable, plot, out, "--out", d], check=True, stdout=subprocess.DEVNULL)
    for name in ("week_series.png", "week_daily.png"):
        assert os.path.getsize(os.path.join(d, name)) > 10000, name
print("time series opens in xarray with a time index, and plots")
