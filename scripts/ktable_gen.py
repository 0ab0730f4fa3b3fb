#!/usr/bin/python3
"""Build k-distribution gas tables (solstrata text format, version 1) from HITRAN line lists.

Two subcommands:
  table  line-by-line cross sections on a fine wavenumber grid, sorted per spectral bin into a
         k-distribution and reduced to Gauss-Legendre points in g, on a pressure x temperature
         (x water-vapour mixing ratio) grid; writes a .ktab file (docs/gas-tables.md).
  lbl    band-averaged transmittance of one homogeneous path, directly line by line.

Also importable (scripts/tests/test_ktable.py uses the functions below). Units: wavenumber cm-1,
wavelength nm, pressure hPa, temperature K, cross section cm2 molecule-1, column molecules cm-2.
"""

import argparse
import hashlib
import math
import os
import sys
import time

import numpy as np
from scipy.interpolate import CubicSpline
from scipy.special import roots_legendre, wofz

VERSION = "1.0"

# Second radiation constant c2 = h c / k, cm K (CODATA 2018; value as given in the HITRAN
# definitions, Rothman et al. 1998 JQSRT 60, 665, appendix).
C2 = 1.4387769
# HITRAN reference temperature, K (Rothman et al. 2013, JQSRT 130, 4-50).
T_REF = 296.0
# Standard atmosphere, hPa.
P_ATM_HPA = 1013.25
# Boltzmann constant, J K-1 (SI 2019, exact).
K_BOLTZMANN = 1.380649e-23
# Speed of light, m s-1 (exact).
C_LIGHT = 299792458.0
# Atomic mass constant, kg (CODATA 2018).
AMU = 1.66053906660e-27
# Loschmidt constant (ideal gas at 273.15 K, 101.325 kPa), molecules cm-3 (CODATA 2018).
LOSCHMIDT_CM3 = 2.6867811e19
# Avogadro constant, mol-1 (SI 2019, exact).
AVOGADRO = 6.02214076e23

# Atomic masses, u (AME2016, Wang et al. 2017, Chinese Phys. C 41, 030003; from memory).
_ATOM_U = {"H": 1.00782503, "D": 2.01410178, "C12": 12.0, "C13": 13.00335484,
           "O16": 15.99491462, "O17": 16.99913176, "O18": 17.99915961}

# HITRAN molecule numbers and isotopologue numbering (Rothman et al. 2013, table 1) with the
# atoms of each isotopologue; the mass (for the Doppler width) is the sum of atomic masses.
_ISOTOPOLOGUES = {
    1: ("H2O", {1: ("H", "H", "O16"), 2: ("H", "H", "O18"), 3: ("H", "H", "O17"),
                4: ("H", "D", "O16"), 5: ("H", "D", "O18"), 6: ("H", "D", "O17"),
                7: ("D", "D", "O16")}),
    2: ("CO2", {1: ("C12", "O16", "O16"), 2: ("C13", "O16", "O16"), 3: ("C12", "O16", "O18"),
                4: ("C12", "O16", "O17"), 5: ("C13", "O16", "O18"), 6: ("C13", "O16", "O17"),
                7: ("C12", "O18", "O18"), 8: ("C12", "O17", "O18"), 9: ("C12", "O17", "O17"),
                10: ("C13", "O18", "O18"), 11: ("C13", "O17", "O18"), 12: ("C12", "O17", "O17")}),
    7: ("O2", {1: ("O16", "O16"), 2: ("O16", "O18"), 3: ("O16", "O17")}),
}
GAS_MOLECULE = {name: mol for mol, (name, _) in _ISOTOPOLOGUES.items()}

# The project's default spectral grid where gases absorb, nm: (start, stop, step).
DEFAULT_BINS_NM = ((250, 280, 5), (280, 340, 1), (340, 400, 5), (400, 700, 10),
                   (700, 1000, 20), (1000, 2000, 50), (2000, 4000, 100))
# Far-wing cut-off, cm-1: each line's profile is set to zero beyond |nu - nu0| > cut-off (no
# baseline subtracted).
DEFAULT_CUTOFF = 25.0
# Fine-grid step as a fraction of the narrowest line's Voigt HWHM at the node.
DEFAULT_STEP_FRACTION = 0.25
# g sub-intervals and Gauss-Legendre points in each: [0, 0.9] 8, [0.9, 0.99] 4, [0.99, 1] 4.
DEFAULT_G_SPLITS = (0.0, 0.9, 0.99, 1.0)
DEFAULT_G_POINTS = (8, 4, 4)


class LineFileError(ValueError):
    """Bad input in a line or partition file; the message starts with file:line."""


def isotopologue_mass_kg(mol, iso):
    """Mass of HITRAN isotopologue (mol, iso), kg."""
    try:
        atoms = _ISOTOPOLOGUES[mol][1][iso]
    except KeyError:
        raise KeyError(f"no mass known for HITRAN molecule {mol} isotopologue {iso}") from None
    return sum(_ATOM_U[a] for a in atoms) * AMU


def _iso_number(ch):
    """HITRAN iso field (one character): '1'-'9', '0' = 10, 'A' = 11, 'B' = 12, ..."""
    if ch.isdigit():
        return 10 if ch == "0" else int(ch)
    if ch.isalpha():
        return 11 + ord(ch.upper()) - ord("A")
    raise ValueError(f"bad isotopologue field '{ch}'")


def sha256_of(path):
    h = hashlib.sha256()
    with open(path, "rb") as f:
        for block in iter(lambda: f.read(1 << 20), b""):
            h.update(block)
    return h.hexdigest()


def read_hitran(path, nu_min=-math.inf, nu_max=math.inf, mol=None):
    """Reads a HITRAN2004+ 160-character line file (Rothman et al. 2005, JQSRT 96, 139, table 1).

    Returns a dict of numpy arrays: mol, iso, nu (cm-1), s296 (cm molecule-1 at 296 K, abundance
    included), gamma_air, gamma_self (cm-1 atm-1 HWHM at 296 K), elower (cm-1), n_air,
    delta_air (cm-1 atm-1). Only lines with nu_min <= nu <= nu_max (and molecule mol) are kept.
    """
    cols = {k: [] for k in ("mol", "iso", "nu", "s296", "gamma_air", "gamma_self", "elower",
                            "n_air", "delta_air")}
    with open(path, encoding="ascii", errors="replace") as f:
        for lineno, rec in enumerate(f, 1):
            rec = rec.rstrip("\r\n")
            if not rec.strip():
                continue
            if len(rec) < 67:
                raise LineFileError(f"{path}:{lineno}: record has {len(rec)} characters, "
                                    "expected a 160-character HITRAN record")
            try:
                m = int(rec[0:2])
                nu = float(rec[3:15])
                if not (nu_min <= nu <= nu_max) or (mol is not None and m != mol):
                    continue
                vals = (m, _iso_number(rec[2]), nu, float(rec[15:25]), float(rec[35:40]),
                        float(rec[40:45]), float(rec[45:55]), float(rec[55:59]),
                        float(rec[59:67]))
            except ValueError as e:
                raise LineFileError(f"{path}:{lineno}: not a HITRAN 160-character record "
                                    f"({e})") from None
            for k, v in zip(cols, vals):
                cols[k].append(v)
    out = {k: np.asarray(v, dtype=int if k in ("mol", "iso") else float) for k, v in cols.items()}
    order = np.argsort(out["nu"], kind="stable")
    return {k: v[order] for k, v in out.items()}


def subset(lines, mask):
    return {k: v[mask] for k, v in lines.items()}


def merge(*line_sets):
    out = {k: np.concatenate([ls[k] for ls in line_sets]) for k in line_sets[0]}
    return subset(out, np.argsort(out["nu"], kind="stable"))


class PartitionSums:
    """TIPS-2017 total internal partition sums Q(T) (Gamache et al. 2017, JQSRT 203, 70-87),
    read from the grid tables `TIPS2017_M<mol>_I<iso>.txt` (columns T [K], Q) and interpolated
    with a natural cubic spline in T (the grid step is 20 K)."""

    def __init__(self, directory):
        self.directory = directory
        self._splines = {}
        self.files = {}

    def path(self, mol, iso):
        return os.path.join(self.directory, f"TIPS2017_M{mol}_I{iso}.txt")

    def has(self, mol, iso):
        return os.path.exists(self.path(mol, iso))

    def _spline(self, mol, iso):
        key = (mol, iso)
        if key not in self._splines:
            path = self.path(mol, iso)
            t, q = [], []
            with open(path, encoding="ascii") as f:
                for lineno, rec in enumerate(f, 1):
                    rec = rec.split("#", 1)[0].split()
                    if not rec:
                        continue
                    try:
                        t.append(float(rec[0]))
                        q.append(float(rec[1]))
                    except (ValueError, IndexError):
                        raise LineFileError(f"{path}:{lineno}: expected 'T Q'") from None
            if len(t) < 4 or np.any(np.diff(t) <= 0):
                raise LineFileError(f"{path}:1: need >= 4 rows with increasing T")
            self._splines[key] = CubicSpline(t, q, bc_type="natural")
            self.files[key] = path
        return self._splines[key]

    def q(self, mol, iso, t_k):
        return float(self._spline(mol, iso)(t_k))


def line_intensity(lines, partition, t_k):
    """Line intensities at temperature t_k, cm molecule-1 (HITRAN convention; Rothman et al.
    1998, JQSRT 60, 665, eq. A11; Simeckova et al. 2006, JQSRT 98, 130, eq. 4):

      S(T) = S(296) Q(296)/Q(T) exp(-c2 E''/T)/exp(-c2 E''/296)
             [1 - exp(-c2 nu/T)]/[1 - exp(-c2 nu/296)].
    """
    s = np.empty_like(lines["s296"])
    for mol, iso in set(zip(lines["mol"].tolist(), lines["iso"].tolist())):
        sel = (lines["mol"] == mol) & (lines["iso"] == iso)
        s[sel] = partition.q(mol, iso, T_REF) / partition.q(mol, iso, t_k)
    nu, e = lines["nu"], lines["elower"]
    boltz = np.exp(-C2 * e * (1.0 / t_k - 1.0 / T_REF))
    stim = -np.expm1(-C2 * nu / t_k) / -np.expm1(-C2 * nu / T_REF)
    return lines["s296"] * s * boltz * stim


def lorentz_hwhm(lines, p_hpa, t_k, h2o_vmr=0.0, self_vmr=None):
    """Lorentz HWHM, cm-1 (Rothman et al. 1998, JQSRT 60, 665, eq. A12):
    gamma = (296/T)^n_air [gamma_air (p - p_self) + gamma_self p_self], p in atm. p_self is the
    partial pressure of the absorbing gas (self_vmr) for the self-broadened lines."""
    p = p_hpa / P_ATM_HPA
    x = h2o_vmr if self_vmr is None else self_vmr
    return (T_REF / t_k) ** lines["n_air"] * (lines["gamma_air"] * p * (1.0 - x)
                                               + lines["gamma_self"] * p * x)


def doppler_hwhm(nu, mass_kg, t_k):
    """Doppler HWHM, cm-1: alpha_D = (nu/c) sqrt(2 ln2 k T/m) (e.g. Goody & Yung 1989,
    Atmospheric Radiation, eq. 3.42)."""
    return nu / C_LIGHT * np.sqrt(2.0 * math.log(2.0) * K_BOLTZMANN * t_k / mass_kg)


def voigt_profile(dnu, gamma_l, alpha_d):
    """Voigt line shape, cm (area 1 over dnu in cm-1), from the Faddeeva function:
    f = Re w(z)/(sigma sqrt(pi)), z = (dnu + i gamma_L)/sigma, sigma = alpha_D/sqrt(ln 2)
    (Armstrong 1967, JQSRT 7, 61; w(z) from scipy.special.wofz, Poppe & Wijers 1990)."""
    sigma = alpha_d / math.sqrt(math.log(2.0))
    z = (dnu + 1j * gamma_l) / sigma
    return wofz(z).real / (sigma * math.sqrt(math.pi))


def voigt_hwhm(gamma_l, alpha_d):
    """Approximate Voigt HWHM, cm-1 (Olivero & Longbothum 1977, JQSRT 17, 233, eq. 3, to 0.02 %)."""
    return 0.5346 * gamma_l + np.sqrt(0.2166 * gamma_l ** 2 + alpha_d ** 2)


class LineSet:
    """Lines prepared for cross-section evaluation: intensities and widths need the node."""

    def __init__(self, lines, partition):
        self.lines = lines
        self.partition = partition
        self.mass = np.array([isotopologue_mass_kg(m, i)
                              for m, i in zip(lines["mol"], lines["iso"])])

    def parameters(self, p_hpa, t_k, self_vmr=0.0):
        """(centre cm-1, S cm molecule-1, gamma_L cm-1, alpha_D cm-1) at the node; the centre
        includes the air pressure shift delta_air p (Rothman et al. 1998, eq. A13)."""
        ln = self.lines
        nu0 = ln["nu"] + ln["delta_air"] * p_hpa / P_ATM_HPA
        return (nu0, line_intensity(ln, self.partition, t_k),
                lorentz_hwhm(ln, p_hpa, t_k, self_vmr=self_vmr),
                doppler_hwhm(ln["nu"], self.mass, t_k))


def fine_grid(nu_lo, nu_hi, step):
    """Cell centres of a uniform grid over [nu_lo, nu_hi], cm-1, step <= the requested step."""
    n = max(1, int(math.ceil((nu_hi - nu_lo) / step)))
    return nu_lo + (np.arange(n) + 0.5) * (nu_hi - nu_lo) / n


def cross_section(grid, nu0, s, gamma_l, alpha_d, cutoff=DEFAULT_CUTOFF):
    """Absorption cross section on `grid` (cm-1, increasing), cm2 molecule-1: the sum over
    lines of S f_Voigt(nu - nu0), each profile cut off beyond |nu - nu0| > cutoff cm-1."""
    sigma = np.zeros_like(grid)
    lo = np.searchsorted(grid, nu0 - cutoff)
    hi = np.searchsorted(grid, nu0 + cutoff)
    for j in np.nonzero(hi > lo)[0]:
        a, b = lo[j], hi[j]
        sigma[a:b] += s[j] * voigt_profile(grid[a:b] - nu0[j], gamma_l[j], alpha_d[j])
    return sigma


def node_cross_section(lineset, nu_lo, nu_hi, p_hpa, t_k, self_vmr=0.0, cutoff=DEFAULT_CUTOFF,
                       step_fraction=DEFAULT_STEP_FRACTION, step=None):
    """Cross sections on the fine grid of bin [nu_lo, nu_hi] cm-1 at one node. The step (unless
    given, cm-1) is step_fraction times the smallest Voigt HWHM of the lines in reach (at low
    pressure <= step_fraction alpha_D; at high pressure it follows the Lorentz width).
    Returns (grid, sigma)."""
    nu0, s, gl, ad = lineset.parameters(p_hpa, t_k, self_vmr)
    near = (nu0 > nu_lo - cutoff) & (nu0 < nu_hi + cutoff)
    if step is None:
        step = step_fraction * float(np.min(voigt_hwhm(gl[near], ad[near]))) if near.any() \
            else (nu_hi - nu_lo)
    grid = fine_grid(nu_lo, nu_hi, step)
    return grid, cross_section(grid, nu0[near], s[near], gl[near], ad[near], cutoff)


def g_quadrature(splits=DEFAULT_G_SPLITS, points=DEFAULT_G_POINTS):
    """Gauss-Legendre nodes and weights in g on each sub-interval [splits[i], splits[i+1]]."""
    g, w = [], []
    for (a, b), n in zip(zip(splits[:-1], splits[1:]), points):
        x, wx = roots_legendre(n)
        g.append(a + (b - a) * 0.5 * (x + 1.0))
        w.append(0.5 * (b - a) * wx)
    return np.concatenate(g), np.concatenate(w)


def k_terms(sigma, g_nodes):
    """k-distribution of a bin (uniform weighting in wavenumber): the cross sections sorted
    increasingly define k(g), g = cumulative fraction of the bin (Lacis & Oinas 1991, JGR 96,
    9027, eq. 6); k is read off at the g nodes by linear interpolation between cell centres."""
    ks = np.sort(sigma)
    gc = (np.arange(ks.size) + 0.5) / ks.size
    return np.interp(g_nodes, gc, ks)


def band_transmittance_lbl(sigma, column):
    """Band transmittance of a homogeneous path, the wavenumber average of exp(-sigma N) over
    the bin's uniform fine grid (Beer-Lambert-Bouguer law); column N in molecules cm-2."""
    column = np.atleast_1d(np.asarray(column, dtype=float))
    return np.array([np.mean(np.exp(-sigma * n)) for n in column])


def band_transmittance_k(k, w, column):
    """Band transmittance from k-terms: sum_i w_i exp(-k_i N) (docs/gas-tables.md)."""
    column = np.atleast_1d(np.asarray(column, dtype=float))
    return np.array([np.sum(w * np.exp(-k * n)) for n in column])


def default_bins_nm():
    out = []
    for a, b, step in DEFAULT_BINS_NM:
        edges = np.arange(a, b + 0.5 * step, step)
        out += [(float(lo), float(hi)) for lo, hi in zip(edges[:-1], edges[1:])]
    return out


def bins_with_lines(bins_nm, nu):
    """Bins (nm) that contain at least one line centre."""
    out = []
    for lo, hi in bins_nm:
        a, b = 1e7 / hi, 1e7 / lo
        if np.any((nu >= a) & (nu < b)):
            out.append((lo, hi))
    return out


def build_table(lineset, bins_nm, pressures_hpa, temperatures_k, vmrs=(0.0,),
                cutoff=DEFAULT_CUTOFF, step_fraction=DEFAULT_STEP_FRACTION,
                g_splits=DEFAULT_G_SPLITS, g_points=DEFAULT_G_POINTS, progress=None):
    """k-terms for every bin and node. Returns a list of (lo_nm, hi_nm, weights,
    k[term, x, p, t]) and the minimum and maximum fine-grid steps used, cm-1."""
    g, w = g_quadrature(g_splits, g_points)
    blocks, steps = [], []
    for lo, hi in bins_nm:
        nu_lo, nu_hi = 1e7 / hi, 1e7 / lo
        k = np.zeros((g.size, len(vmrs), len(pressures_hpa), len(temperatures_k)))
        for ix, x in enumerate(vmrs):
            for ip, p in enumerate(pressures_hpa):
                for it, t in enumerate(temperatures_k):
                    grid, sigma = node_cross_section(lineset, nu_lo, nu_hi, p, t, x, cutoff,
                                                     step_fraction)
                    steps.append((nu_hi - nu_lo) / grid.size)
                    k[:, ix, ip, it] = k_terms(sigma, g)
        blocks.append((lo, hi, w, k))
        if progress:
            progress(f"bin {lo:g}-{hi:g} nm done")
    return blocks, (min(steps), max(steps))


def write_table(path, gas, title, sources, generator_lines, pressures_hpa, temperatures_k,
                vmrs, blocks):
    """Writes the solstrata k-table text format version 1 (docs/gas-tables.md)."""
    out = [f"solstrata_ktable 1", f"gas {gas}", f"title {title}"]
    out += [f"source {s}" for s in sources]
    out += [f"generator {s}" for s in generator_lines]
    out.append("weighting wavenumber")
    out.append("pressure_hpa " + " ".join(f"{p:.6g}" for p in pressures_hpa))
    out.append("temperature_k " + " ".join(f"{t:.6g}" for t in temperatures_k))
    if vmrs is not None:
        out.append("h2o_vmr " + " ".join(f"{x:.6g}" for x in vmrs))
    out.append(f"bins {len(blocks)}")
    for lo, hi, w, k in blocks:
        wn = w / w.sum()
        out.append(f"bin {lo:g} {hi:g} {wn.size}")
        out.append("weights " + " ".join(f"{x:.15g}" for x in wn))
        for i in range(k.shape[0]):
            out.append("k " + " ".join(f"{v:.4e}" for v in k[i].ravel()))
    out.append("end")
    tmp = path + ".tmp"
    with open(tmp, "w", encoding="ascii") as f:
        f.write("\n".join(out) + "\n")
    os.replace(tmp, path)


def read_table(path):
    """Reads a version-1 table back (for tests): dict with pressure_hpa, temperature_k,
    h2o_vmr, and bins = list of (lo, hi, weights, k[term, x, p, t])."""
    tab = {"h2o_vmr": [0.0], "bins": []}
    with open(path, encoding="ascii") as f:
        toks = [ln.split("#", 1)[0].split() for ln in f]
    toks = [t for t in toks if t]
    assert toks[0] == ["solstrata_ktable", "1"]
    i = 1
    while toks[i][0] != "bins":
        key = toks[i][0]
        if key in ("pressure_hpa", "temperature_k", "h2o_vmr"):
            tab[key] = [float(v) for v in toks[i][1:]]
        elif key == "gas":
            tab["gas"] = toks[i][1]
        i += 1
    nb = int(toks[i][1])
    i += 1
    shape = (len(tab["h2o_vmr"]), len(tab["pressure_hpa"]), len(tab["temperature_k"]))
    for _ in range(nb):
        _, lo, hi, n = toks[i]
        n = int(n)
        w = np.array([float(v) for v in toks[i + 1][1:]])
        k = np.array([[float(v) for v in toks[i + 2 + j][1:]] for j in range(n)])
        tab["bins"].append((float(lo), float(hi), w, k.reshape((n,) + shape)))
        i += 2 + n
    assert toks[i] == ["end"]
    return tab


# Column conversions, molecules cm-2.
def column_from_km_atm(u):
    """Path of pure gas at STP (273.15 K, 1013.25 hPa), km -> molecules cm-2 (Loschmidt)."""
    return np.asarray(u) * 1e5 * LOSCHMIDT_CM3


def column_from_precipitable_cm(u, molar_mass_g=18.01528):
    """Precipitable water, cm (= g cm-2 of liquid water) -> molecules cm-2 (N_A / M_H2O)."""
    return np.asarray(u) * AVOGADRO / molar_mass_g


HITRAN2012 = ("HITRAN2012: Rothman, L. S. et al. 2013, The HITRAN2012 molecular spectroscopic "
              "database, JQSRT 130, 4-50")
TIPS2017 = ("TIPS-2017 partition sums: Gamache, R. R. et al. 2017, Total internal partition sums "
            "for 166 isotopologues of 51 molecules important in planetary atmospheres, "
            "JQSRT 203, 70-87")


def _log(msg):
    print(f"ktable_gen: {msg}", file=sys.stderr, flush=True)


def _parse_bins(text):
    """'lo:hi:step,...' nm -> list of (lo, hi)."""
    out = []
    for part in text.split(","):
        a, b, s = (float(v) for v in part.split(":"))
        edges = np.arange(a, b + 0.5 * s, s)
        out += [(float(lo), float(hi)) for lo, hi in zip(edges[:-1], edges[1:])]
    return out


def _load_lines(args):
    mol = GAS_MOLECULE[args.gas]
    sets, sources = [], []
    for path in args.lines:
        sets.append(read_hitran(path, mol=mol))
        sources.append(f"line list {os.path.basename(path)} sha256 {sha256_of(path)} "
                       f"({sets[-1]['nu'].size} lines of {args.gas})")
    lines = merge(*sets)
    if args.min_strength > 0:
        lines = subset(lines, lines["s296"] >= args.min_strength)
    part = PartitionSums(args.partition_dir)
    pairs = sorted(set(zip(lines["mol"].tolist(), lines["iso"].tolist())))
    missing = [pi for pi in pairs if not part.has(*pi)]
    if missing:
        keep = np.ones(lines["nu"].size, dtype=bool)
        for m, i in missing:
            bad = (lines["mol"] == m) & (lines["iso"] == i)
            _log(f"no partition sums for molecule {m} isotopologue {i}: "
                 f"{int(bad.sum())} lines dropped")
            sources.append(f"dropped {int(bad.sum())} lines of isotopologue {i} "
                           "(no partition-sum file)")
            keep &= ~bad
        lines = subset(lines, keep)
    pairs = [pi for pi in pairs if pi not in missing]
    for m, i in pairs:
        p = part.path(m, i)
        sources.append(f"partition sums {os.path.basename(p)} sha256 {sha256_of(p)}")
    sources += [args.citation, TIPS2017]
    return LineSet(lines, part), sources


def _cmd_table(args):
    t0 = time.time()
    lineset, sources = _load_lines(args)
    bins = _parse_bins(args.bins_nm) if args.bins_nm else default_bins_nm()
    bins = bins_with_lines(bins, lineset.lines["nu"])
    pressures = np.geomspace(args.p_min, args.p_max, args.n_pressures)
    temps = np.arange(args.t_min, args.t_max + 0.5 * args.t_step, args.t_step)
    vmrs = None
    if args.gas == "H2O":
        vmrs = [float(v) for v in args.h2o_vmr.split(",")]
    g_points = tuple(int(v) for v in args.g_points.split(","))
    g_splits = tuple(float(v) for v in args.g_splits.split(","))
    if len(g_splits) != len(g_points) + 1 or g_splits[0] != 0.0 or g_splits[-1] != 1.0:
        raise SystemExit("ktable_gen: --g-splits must run from 0 to 1 with one more entry "
                         "than --g-points")
    _log(f"{lineset.lines['nu'].size} lines, {len(bins)} bins, {len(pressures)} x {len(temps)}"
         f"{'' if vmrs is None else f' x {len(vmrs)}'} nodes")
    blocks, (smin, smax) = build_table(lineset, bins, pressures, temps,
                                       (0.0,) if vmrs is None else vmrs, args.cutoff,
                                       args.step_fraction, g_splits, g_points, progress=_log)
    gen = [f"ktable_gen.py {VERSION} (solstrata scripts/)",
           "line shape Voigt (Faddeeva function, scipy.special.wofz), air and self broadening "
           "with temperature exponent n_air, air pressure shift; line intensity with TIPS "
           "partition-sum ratio, lower-state Boltzmann factor and stimulated emission",
           f"far-wing cut-off {args.cutoff:g} cm-1 (profile zero beyond, no baseline removed)",
           f"fine grid per node: step = {args.step_fraction:g} x smallest Voigt HWHM of the "
           f"lines in reach (used {smin:.3g} to {smax:.3g} cm-1)",
           "g points: Gauss-Legendre on " + ", ".join(
               f"[{a:g},{b:g}] {n}" for a, b, n in zip(g_splits[:-1], g_splits[1:], g_points))
           + "; k(g) from the sorted fine-grid cross sections, uniform weight in wavenumber",
           f"self-broadening partial pressure: {'h2o_vmr axis' if vmrs is not None else 'none'}"
           f"{'' if args.min_strength <= 0 else f'; lines with S(296) < {args.min_strength:g} dropped'}"]
    write_table(args.out, args.gas, args.title or f"{args.gas} k-distribution", sources, gen,
                pressures, temps, vmrs, blocks)
    _log(f"wrote {args.out} ({os.path.getsize(args.out)} bytes) in {time.time() - t0:.0f} s")


def _cmd_lbl(args):
    lineset, _ = _load_lines(args)
    lo, hi = args.bin_nm
    grid, sigma = node_cross_section(lineset, 1e7 / hi, 1e7 / lo, args.p_hpa, args.t_k,
                                     args.self_vmr, args.cutoff, args.step_fraction)
    print("# column_molecules_cm2 band_transmittance")
    for n, tr in zip(args.column, band_transmittance_lbl(sigma, args.column)):
        print(f"{n:.6e} {tr:.8f}")


def main(argv=None):
    ap = argparse.ArgumentParser(description=__doc__.split("\n\n")[0],
                                 formatter_class=argparse.RawDescriptionHelpFormatter)
    sub = ap.add_subparsers(dest="cmd", required=True)
    data = os.path.join(os.path.dirname(os.path.abspath(__file__)), "..")
    common = argparse.ArgumentParser(add_help=False)
    common.add_argument("--lines", nargs="+", required=True, metavar="FILE",
                        help="HITRAN 160-character line files (joined)")
    common.add_argument("--gas", required=True, choices=sorted(GAS_MOLECULE),
                        help="molecule; other molecules in the files are ignored")
    common.add_argument("--partition-dir", required=True,
                        help="directory of TIPS2017_M<mol>_I<iso>.txt files")
    common.add_argument("--citation", default=HITRAN2012,
                        help="line-list edition and citation for the header (default HITRAN2012)")
    common.add_argument("--min-strength", type=float, default=0.0,
                        help="drop lines with S(296) below this, cm molecule-1 (default 0)")
    common.add_argument("--cutoff", type=float, default=DEFAULT_CUTOFF,
                        help="far-wing cut-off, cm-1 (default 25)")
    common.add_argument("--step-fraction", type=float, default=DEFAULT_STEP_FRACTION,
                        help="fine-grid step / smallest Voigt HWHM (default 0.25)")
    t = sub.add_parser("table", parents=[common], help="write a k-distribution table")
    t.add_argument("--out", required=True, help="output .ktab file")
    t.add_argument("--title", help="title line")
    t.add_argument("--bins-nm", help="bins 'lo:hi:step,...' in nm (default: the default grid "
                   "250-4000 nm); only bins containing line centres are written")
    t.add_argument("--p-min", type=float, default=0.01, help="hPa (default 0.01)")
    t.add_argument("--p-max", type=float, default=1050.0, help="hPa (default 1050)")
    t.add_argument("--n-pressures", type=int, default=16, help="log-spaced (default 16)")
    t.add_argument("--t-min", type=float, default=180.0, help="K (default 180)")
    t.add_argument("--t-max", type=float, default=320.0, help="K (default 320)")
    t.add_argument("--t-step", type=float, default=20.0, help="K (default 20)")
    t.add_argument("--h2o-vmr", default="0,0.01,0.02,0.04",
                   help="H2O only: water-vapour mixing ratios of the self-broadening axis "
                   "(default 0,0.01,0.02,0.04)")
    t.add_argument("--g-splits", default="0,0.9,0.99,1", help="g sub-interval edges")
    t.add_argument("--g-points", default="8,4,4", help="Gauss-Legendre points per sub-interval")
    t.set_defaults(func=_cmd_table)
    b = sub.add_parser("lbl", parents=[common],
                       help="band transmittance of a homogeneous path, line by line")
    b.add_argument("--bin-nm", nargs=2, type=float, required=True, metavar=("LO", "HI"))
    b.add_argument("--p-hpa", type=float, required=True)
    b.add_argument("--t-k", type=float, required=True)
    b.add_argument("--self-vmr", type=float, default=0.0,
                   help="volume mixing ratio of the gas for self broadening (default 0)")
    b.add_argument("--column", type=float, nargs="+", required=True,
                   help="gas columns, molecules cm-2")
    b.set_defaults(func=_cmd_lbl)
    del data
    args = ap.parse_args(argv)
    try:
        args.func(args)
    except (LineFileError, OSError, KeyError) as e:
        print(f"ktable_gen: {e}", file=sys.stderr)
        return 1
    return 0


if __name__ == "__main__":
    sys.exit(main())
