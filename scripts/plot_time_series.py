"""Figures of a solstrata time-series file (imported by scripts/plot).

<name>_series.png  GHI, DNI, DHI (and plane-of-array) against local time, night shaded; solar
                   elevation and PAR photon flux below
<name>_daily.png   daily totals: direct + diffuse = global as stacked bars, extraterrestrial (TOA)
                   and plane-of-array totals as markers; PAR photons per day below
"""
import datetime as dt
import os

import matplotlib.dates as mdates
import matplotlib.pyplot as plt
import numpy as np


def _text(v):
    return v.decode() if isinstance(v, bytes) else str(v)


def is_time_series(f):
    return "time" in f and "local_time" in f


def _local_times(f):
    return [dt.datetime.fromisoformat(_text(s).replace("Z", "+00:00")) for s in f["local_time"][()]]


def _tz_label(times):
    off = times[0].utcoffset() if times and times[0].utcoffset() is not None else dt.timedelta(0)
    h = off.total_seconds() / 3600.0
    return "UTC" + (f"{h:+g}" if h else "")


def _title(f, what):
    t = _text(f.attrs.get("title", ""))
    return f"{what}\n{t}" if t else what


def plot_series(f, stem, out):
    times = _local_times(f)
    tz = _tz_label(times)
    # Naive local clock times on the axis (the offset is named in the label).
    x = [t.replace(tzinfo=None) for t in times]
    up = f["sun_above_horizon"][()] if "sun_above_horizon" in f else np.ones(len(x))
    fig, (ax, ax2) = plt.subplots(2, 1, figsize=(11, 7), sharex=True, gridspec_kw={"height_ratios": [3, 2]})
    for name, label, style in (("global_horizontal_irradiance", "global horizontal (GHI)", "-"),
                               ("direct_normal_irradiance", "direct normal (DNI)", "--"),
                               ("diffuse_horizontal_irradiance", "diffuse horizontal (DHI)", ":"),
                               ("plane_global_irradiance", "tilted plane (plane of array)", "-.")):
        if name in f:
            ax.plot(x, f[name][()], style, label=label, lw=1.6)
    # Night: shade the steps with the sun below the horizon.
    for i in range(len(x) - 1):
        if up[i] == 0 and up[i + 1] == 0:
            ax.axvspan(x[i], x[i + 1], color="0.9", lw=0)
            ax2.axvspan(x[i], x[i + 1], color="0.9", lw=0)
    ax.set_ylabel("irradiance (W m$^{-2}$)")
    top = max((np.nanmax(f[n][()]) for n in ("global_horizontal_irradiance", "direct_normal_irradiance",
                                               "plane_global_irradiance") if n in f), default=1.0)
    ax.set_ylim(0, 1.22 * top)
    ax.legend(loc="upper center", fontsize=9, ncol=4, frameon=False)
    ax.grid(alpha=0.3)
    caption = "clear-sky model; night shaded grey"
    if "plane_global_irradiance" in f:
        tilt = f.attrs.get("plane_tilt_deg")
        az = f.attrs.get("plane_azimuth_deg")
        if tilt is not None:
            caption += f"; plane tilt {float(np.ravel(tilt)[0]):g}° facing azimuth {float(np.ravel(az)[0]):g}°"
    ax.set_title(_title(f, "Irradiance at the surface, " + caption), fontsize=10)
    elev = 90.0 - f["solar_zenith_angle"][()]
    ax2.plot(x, np.where(elev > -20, elev, np.nan), color="tab:orange", label="solar elevation")
    ax2.axhline(0, color="0.4", lw=0.8)
    ax2.set_ylabel("solar elevation (°)", color="tab:orange")
    ax2.grid(alpha=0.3)
    if "par_photon" in f:
        ax3 = ax2.twinx()
        ax3.plot(x, f["par_photon"][()], color="tab:green", label="PAR photon flux")
        ax3.set_ylabel("PAR ($\\mu$mol m$^{-2}$ s$^{-1}$)", color="tab:green")
        ax3.set_ylim(bottom=0)
    ax2.set_xlabel(f"local time ({tz})")
    ax2.xaxis.set_major_formatter(mdates.DateFormatter("%d %b\n%H:%M"))
    fig.tight_layout()
    path = os.path.join(out, f"{stem}_series.png")
    fig.savefig(path, dpi=120)
    plt.close(fig)
    return path


def plot_daily(f, stem, out):
    if "daily_global_horizontal" not in f:
        return None
    off_min = int(np.ravel(f.attrs.get("utc_offset_minutes", [0]))[0])
    days = [dt.datetime.fromtimestamp(float(d), dt.timezone.utc) + dt.timedelta(minutes=off_min) for d in f["day"][()]]
    labels = [d.strftime("%d %b") for d in days]
    i = np.arange(len(days))
    direct = f["daily_direct_horizontal"][()]
    diffuse = f["daily_diffuse_horizontal"][()]
    fig, (ax, ax2) = plt.subplots(2, 1, figsize=(max(6, 0.6 * len(days) + 3), 7), sharex=True,
                                  gridspec_kw={"height_ratios": [3, 2]})
    ax.bar(i, direct, color="tab:orange", label="direct (horizontal)")
    ax.bar(i, diffuse, bottom=direct, color="tab:blue", label="diffuse (horizontal)")
    ax.plot(i, f["daily_toa_horizontal"][()], "k_", ms=18, mew=2, label="top of atmosphere (extraterrestrial)")
    if "daily_plane_global" in f:
        ax.plot(i, f["daily_plane_global"][()], "D", color="tab:red", label="tilted plane (global)")
    ax.set_ylabel("daily total (MJ m$^{-2}$ day$^{-1}$)")
    ax.set_ylim(0, 1.3 * np.nanmax(f["daily_toa_horizontal"][()]))
    ax.legend(loc="upper center", fontsize=9, ncol=2, frameon=False)
    ax.grid(axis="y", alpha=0.3)
    ax.set_title(_title(f, "Daily totals (clear sky): global = direct + diffuse"), fontsize=10)
    if "daily_par_photon" in f:
        ax2.bar(i, f["daily_par_photon"][()], color="tab:green")
        ax2.set_ylabel("PAR (mol m$^{-2}$ day$^{-1}$)")
    else:
        ax2.bar(i, f["daylight_length"][()], color="0.6")
        ax2.set_ylabel("daylight (h)")
    ax2.grid(axis="y", alpha=0.3)
    ax2.set_xticks(i)
    ax2.set_xticklabels(labels, rotation=45 if len(days) > 10 else 0)
    ax2.set_xlabel(f"local day (UTC{off_min / 60:+g} h)")
    fig.tight_layout()
    path = os.path.join(out, f"{stem}_daily.png")
    fig.savefig(path, dpi=120)
    plt.close(fig)
    return path
