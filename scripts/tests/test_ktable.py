#!/usr/bin/python3
"""Tests of scripts/ktable_gen.py against analytic results and published check values.

Run: scripts/test_ktable (or python3 -m unittest discover -s scripts/tests). Path units in the
table-vs-line-by-line checks: O2 in km of pure O2 at STP (1 km-atm = 2.687e24 molecules cm-2;
the vertical O2 column of the atmosphere is about 1.7 km-atm), H2O in precipitable cm
(1 cm = 1 g cm-2 = 3.343e22 molecules cm-2).
"""

import math
import os
import sys
import tempfile
import unittest

import numpy as np
from scipy.optimize import brentq
from scipy.special import i0e, i1e

HERE = os.path.dirname(os.path.abspath(__file__))
sys.path.insert(0, os.path.dirname(HERE))
import ktable_gen as kg  # noqa: E402

DATA = os.environ.get("SOLSTRATA_LINE_DATA", os.path.join(os.path.dirname(os.path.abspath(__file__)), "..", "..", "tests", "data", "lines"))
O2_FILE = os.path.join(DATA, "O2_hitran2012_2000-15000.par")
H2O_FILE = os.path.join(DATA, "H2O_2000-5000.par")
PART = os.path.join(DATA, "partition")
SHIPPED = os.path.join(HERE, "..", "..", "solver", "data", "gases", "o2_hitran2012.ktab")
HAVE_DATA = os.path.exists(O2_FILE) and os.path.exists(H2O_FILE)
# The line data ship in tests/data/lines: a missing file is a failure, not a reason to skip.
if not HAVE_DATA and "SOLSTRATA_LINE_DATA" not in os.environ:
    raise SystemExit(f"line data missing: {O2_FILE}, {H2O_FILE}")

# Paths spanning 1e-3 .. 10 (see the module docstring for units).
PATHS = np.geomspace(1e-3, 10.0, 9)
# Printed summary of the table-vs-LBL errors (run with -v to see it).
VERBOSE = "-v" in sys.argv or os.environ.get("KTABLE_TEST_VERBOSE")


def one_line(nu0, s, gamma_l, alpha_d):
    return (np.array([nu0]), np.array([s]), np.array([gamma_l]), np.array([alpha_d]))


def ladenburg_reiche(s, gamma, u):
    """Equivalent width of one Lorentz line, W = 2 pi gamma x e^-x [I0(x) + I1(x)],
    x = S u/(2 pi gamma) (Ladenburg & Reiche 1913, Ann. Phys. 42, 181; e.g. Goody & Yung 1989,
    Atmospheric Radiation, eq. 4.12). i0e, i1e are e^-x I0, e^-x I1."""
    x = s * u / (2 * math.pi * gamma)
    return 2 * math.pi * gamma * x * (i0e(x) + i1e(x))


class LineShapeTest(unittest.TestCase):
    S = 1e-20     # cm molecule-1
    GAMMA = 0.1   # cm-1
    ALPHA = 1e-5  # cm-1, negligible Doppler width: the Voigt profile is then the Lorentz profile

    def equivalent_width(self, u):
        """Line-by-line equivalent width, cm-1: integral of 1 - exp(-sigma u) over a grid of
        step gamma/10 reaching 1e5 gamma (cut-off there) on both sides of the centre."""
        cut = 1e5 * self.GAMMA
        grid = kg.fine_grid(-cut, cut, self.GAMMA / 10)
        sigma = kg.cross_section(grid, *one_line(0.0, self.S, self.GAMMA, self.ALPHA), cutoff=cut)
        return float(np.sum(-np.expm1(-sigma * u)) * (grid[1] - grid[0]))

    def test_equivalent_width_against_ladenburg_reiche(self):
        # Analytic: Ladenburg & Reiche (1913). The 1e5-gamma cut-off loses 2 S u gamma/(pi cut)
        # of absorption (computed from the Lorentz wing integral), < 3e-4 of W at x = 1000.
        for x in (1e-4, 0.1, 1.0, 10.0, 1000.0):
            u = x * 2 * math.pi * self.GAMMA / self.S
            w = self.equivalent_width(u)
            self.assertAlmostEqual(w / ladenburg_reiche(self.S, self.GAMMA, u), 1.0, delta=5e-4,
                                   msg=f"x = {x}")

    def test_weak_and_strong_limits(self):
        # Analytic limits of Ladenburg & Reiche: W -> S u (x << 1), W -> 2 sqrt(S gamma u) (x >> 1,
        # next term of relative order 1/(8x), computed from the asymptotic series of I0 + I1).
        u = 1e-4 * 2 * math.pi * self.GAMMA / self.S
        self.assertAlmostEqual(self.equivalent_width(u) / (self.S * u), 1.0, delta=1e-4)
        u = 1e3 * 2 * math.pi * self.GAMMA / self.S
        self.assertAlmostEqual(self.equivalent_width(u) / (2 * math.sqrt(self.S * self.GAMMA * u)),
                               1.0, delta=1e-3)

    def test_doppler_hwhm(self):
        # alpha_D = (nu/c) sqrt(2 ln2 k T/m) (checkvalues.md section 11); O2 (16O2) mass
        # 31.98983 u (from memory), k = 1.380649e-23 J/K and c exact (SI 2019), u = 1.66053907e-27
        # kg (CODATA 2018, from memory).
        nu, t = 13000.0, 250.0
        expected = nu / 299792458.0 * math.sqrt(2 * math.log(2) * 1.380649e-23 * t
                                                / (31.98983 * 1.66053907e-27))
        alpha = float(kg.doppler_hwhm(nu, kg.isotopologue_mass_kg(7, 1), t))
        self.assertAlmostEqual(alpha / expected, 1.0, delta=1e-6)
        # Half maximum of the computed profile (gamma_L = 0) sits at alpha_D; the peak of a
        # normalised Gaussian of HWHM alpha is sqrt(ln2/pi)/alpha (analytic).
        peak = float(kg.voigt_profile(np.array([0.0]), 0.0, alpha)[0])
        self.assertAlmostEqual(peak * alpha / math.sqrt(math.log(2) / math.pi), 1.0, delta=1e-9)
        half = brentq(lambda d: kg.voigt_profile(np.array([d]), 0.0, alpha)[0] - 0.5 * peak,
                      0.0, 5 * alpha, xtol=1e-12)
        self.assertAlmostEqual(half / expected, 1.0, delta=1e-6)


class PartitionAndIntensityTest(unittest.TestCase):
    def setUp(self):
        if not os.path.isdir(PART):
            self.skipTest(f"no partition sums in {PART}")
        self.part = kg.PartitionSums(PART)

    def test_h2o_partition_sums(self):
        # data/lines/README.md: H2O (1,1) Q(280) = 160.67, Q(300) = 178.12, and HITRAN gives
        # Q(296) = 174.58 (the cubic spline between grid nodes must reproduce it).
        self.assertAlmostEqual(self.part.q(1, 1, 280.0), 160.67, delta=0.005)
        self.assertAlmostEqual(self.part.q(1, 1, 300.0), 178.12, delta=0.005)
        self.assertAlmostEqual(self.part.q(1, 1, 296.0), 174.58, delta=0.02)

    def test_intensity_scales_with_partition_sum(self):
        # S(T) with E'' = 0 and nu >> T/c2 is S(296) Q(296)/Q(T); with E'' = 1000 cm-1 it gains
        # exp(-c2 E'' (1/T - 1/296)). Q values from data/lines/README.md; formula from
        # checkvalues.md section 11 (computed from the formula).
        lines = {"mol": np.array([1, 1]), "iso": np.array([1, 1]), "nu": np.array([13000.0] * 2),
                 "s296": np.array([1e-21, 1e-21]), "elower": np.array([0.0, 1000.0])}
        s = kg.line_intensity(lines, self.part, 280.0)
        ratio = 174.58 / 160.67
        self.assertAlmostEqual(s[0] / 1e-21 / ratio, 1.0, delta=2e-4)
        boltz = math.exp(-1.4387769 * 1000.0 * (1 / 280.0 - 1 / 296.0))
        self.assertAlmostEqual(s[1] / 1e-21 / (ratio * boltz), 1.0, delta=2e-4)
        # Stimulated emission at 500 cm-1: [1 - exp(-c2 nu/T)]/[1 - exp(-c2 nu/296)] (computed).
        lines["nu"] = np.array([500.0, 500.0])
        s = kg.line_intensity(lines, self.part, 280.0)
        stim = (1 - math.exp(-1.4387769 * 500 / 280)) / (1 - math.exp(-1.4387769 * 500 / 296))
        self.assertAlmostEqual(s[0] / 1e-21 / (ratio * stim), 1.0, delta=2e-4)

    @unittest.skipUnless(HAVE_DATA, "line data not available")
    def test_band_sum_follows_partition_scaling(self):
        # Computed from the formula of checkvalues.md section 11. The O2 A band at 280 K vs 296 K: sum S(T) = Q(296)/Q(T) sum S(296) exp(-c2 E''(1/T -
        # 1/296)) (nu >> T/c2, stimulated factor 1 to 1e-28). Q(280) and Q(296) of 16O2 are read
        # at TIPS grid nodes 280 K and by spline at 296 K; the check is that the band sum uses
        # the per-isotopologue ratio and the per-line Boltzmann factor together.
        lines = kg.read_hitran(O2_FILE, 12900.0, 13200.0)
        s280 = kg.line_intensity(lines, self.part, 280.0).sum()
        expect = 0.0
        for iso in (1, 2, 3):
            m = lines["iso"] == iso
            q = self.part.q(7, iso, 296.0) / self.part.q(7, iso, 280.0)
            expect += q * np.sum(lines["s296"][m] * np.exp(
                -1.4387769 * lines["elower"][m] * (1 / 280.0 - 1 / 296.0)))
        self.assertAlmostEqual(s280 / expect, 1.0, delta=1e-9)

    @unittest.skipUnless(HAVE_DATA, "line data not available")
    def test_o2_a_band_integrated_intensity(self):
        # checkvalues.md section 11: sum S over 12900-13200 cm-1 = 2.243e-22 cm molecule-1.
        lines = kg.read_hitran(O2_FILE, 12900.0, 13200.0)
        self.assertAlmostEqual(lines["s296"].sum() / 2.243e-22, 1.0, delta=3e-4)

    def test_bad_record_names_file_and_line(self):
        with tempfile.NamedTemporaryFile("w", suffix=".par", delete=False) as f:
            f.write("short record\n")
        try:
            with self.assertRaisesRegex(kg.LineFileError, r"\.par:1:"):
                kg.read_hitran(f.name)
        finally:
            os.unlink(f.name)


def compare(lineset, bin_nm, p_hpa, t_k, columns, self_vmr=0.0):
    """(LBL transmittance, k-table transmittance) for one bin and node, via the table writer
    and reader (so the file format round trip is part of the check)."""
    blocks, _ = kg.build_table(lineset, [bin_nm], [p_hpa], [t_k], [self_vmr])
    with tempfile.TemporaryDirectory() as d:
        path = os.path.join(d, "t.ktab")
        kg.write_table(path, "X", "test", ["test"], ["test"], [p_hpa], [t_k],
                       [self_vmr] if self_vmr else None, blocks)
        tab = kg.read_table(path)
    _, _, w, k = tab["bins"][0]
    assert abs(w.sum() - 1.0) < 1e-9
    lo, hi = bin_nm
    _, sigma = kg.node_cross_section(lineset, 1e7 / hi, 1e7 / lo, p_hpa, t_k, self_vmr)
    return (kg.band_transmittance_lbl(sigma, columns),
            kg.band_transmittance_k(k[:, 0, 0, 0], w, columns))


def report(label, lbl, tab):
    if VERBOSE:
        err = tab - lbl
        print(f"\n{label}: T_lbl {np.array2string(lbl, precision=4)}\n"
              f"  T_k - T_lbl {np.array2string(err, precision=1)}; max |dT| {abs(err).max():.2e},"
              f" max rel {(abs(err) / lbl).max():.2e}", file=sys.stderr)


@unittest.skipUnless(HAVE_DATA, "line data not available")
class TableVersusLineByLineTest(unittest.TestCase):
    """The k-distribution's band transmittance sum w_i exp(-k_i N) against the line-by-line
    average of exp(-sigma N) over the bin for the same homogeneous path (the reference is the
    Beer-Lambert-Bouguer law applied at each fine-grid wavenumber). Tolerance: 0.005 in band
    transmittance (0.5 % of the incident beam), 0.01 for the strong H2O band."""

    @classmethod
    def setUpClass(cls):
        part = kg.PartitionSums(PART)
        cls.o2 = kg.LineSet(kg.read_hitran(O2_FILE), part)
        h2o = kg.read_hitran(H2O_FILE, 3600.0, 3900.0)
        # Small subset for test speed: the 2.7 um band's lines with S >= 1e-22 (the band's
        # strong lines that set the transmittance at 1e-3..10 pr cm).
        cls.h2o = kg.LineSet(kg.subset(h2o, h2o["s296"] >= 1e-22), part)

    def test_o2_a_band(self):
        cols = kg.column_from_km_atm(PATHS)
        for p in (1013.25, 100.0, 1.0):
            lbl, tab = compare(self.o2, (760.0, 780.0), p, 260.0, cols)
            report(f"O2 A 760-780 nm p={p} hPa T=260 K, u=1e-3..10 km-atm", lbl, tab)
            self.assertTrue(lbl.min() < 0.97, "the path must absorb")
            np.testing.assert_allclose(tab, lbl, atol=0.005, rtol=0)

    def test_o2_b_band_and_1270(self):
        cols = kg.column_from_km_atm(PATHS)
        for bin_nm, p in (((680.0, 690.0), 300.0), ((1250.0, 1300.0), 300.0),
                          ((1250.0, 1300.0), 1.0)):
            lbl, tab = compare(self.o2, bin_nm, p, 240.0, cols)
            report(f"O2 {bin_nm} nm p={p} hPa T=240 K, u=1e-3..10 km-atm", lbl, tab)
            np.testing.assert_allclose(tab, lbl, atol=0.005, rtol=0)

    def test_h2o_subset(self):
        cols = kg.column_from_precipitable_cm(PATHS)
        for p, x in ((1013.25, 0.02), (200.0, 0.001)):
            lbl, tab = compare(self.h2o, (2600.0, 2700.0), p, 280.0, cols, self_vmr=x)
            report(f"H2O 2600-2700 nm p={p} hPa T=280 K x={x}, u=1e-3..10 pr cm", lbl, tab)
            self.assertTrue(lbl.min() < 0.2, "the path must be optically thick")
            np.testing.assert_allclose(tab, lbl, atol=0.01, rtol=0)


@unittest.skipUnless(HAVE_DATA, "line data not available")
class CommandLineTest(unittest.TestCase):
    def test_h2o_table_with_self_broadening_axis(self):
        # End to end through the command: an H2O table with an h2o_vmr axis, then the term at
        # the x = 0.02 node against line-by-line with 2 % self broadening (Beer-Lambert-Bouguer
        # reference as above), paths 1e-3..10 pr cm.
        with tempfile.TemporaryDirectory() as d:
            out = os.path.join(d, "h2o.ktab")
            rc = kg.main(["table", "--gas", "H2O", "--lines", H2O_FILE, "--partition-dir", PART,
                          "--min-strength", "1e-21", "--bins-nm", "2600:2700:100",
                          "--n-pressures", "2", "--p-min", "100", "--p-max", "1000",
                          "--t-min", "280", "--t-max", "280", "--h2o-vmr", "0,0.02",
                          "--out", out])
            self.assertEqual(rc, 0)
            tab = kg.read_table(out)
            with open(out) as f:
                text = f.read()
        self.assertIn("source line list H2O_2000-5000.par sha256 ", text)
        self.assertIn("Rothman, L. S. et al. 2013", text)
        self.assertEqual(tab["h2o_vmr"], [0.0, 0.02])
        self.assertEqual([(lo, hi) for lo, hi, _, _ in tab["bins"]], [(2600.0, 2700.0)])
        _, _, w, k = tab["bins"][0]
        h2o = kg.read_hitran(H2O_FILE, 3600.0, 3900.0)
        lineset = kg.LineSet(kg.subset(h2o, h2o["s296"] >= 1e-21), kg.PartitionSums(PART))
        _, sigma = kg.node_cross_section(lineset, 1e7 / 2700, 1e7 / 2600, 1000.0, 280.0, 0.02)
        cols = kg.column_from_precipitable_cm(PATHS)
        lbl = kg.band_transmittance_lbl(sigma, cols)
        t_k = kg.band_transmittance_k(k[:, 1, 1, 0], w, cols)
        report("CLI H2O table x=0.02 p=1000 hPa T=280 K", lbl, t_k)
        np.testing.assert_allclose(t_k, lbl, atol=0.01, rtol=0)
        # Self broadening widens the lines: the x = 0.02 path absorbs more at u = 10 pr cm than
        # the x = 0 one (gamma_self about 5x gamma_air for H2O lines, from memory; the test data
        # have it line by line).
        t0 = kg.band_transmittance_k(k[:, 0, 1, 0], w, cols)
        self.assertLess(t_k[-3], t0[-3])


@unittest.skipUnless(HAVE_DATA and os.path.exists(SHIPPED), "shipped table or line data missing")
class ShippedTableTest(unittest.TestCase):
    def test_shipped_o2_table_against_lbl(self):
        # The committed table itself, at its node nearest 1013 hPa and at 260 K, for the A band.
        tab = kg.read_table(SHIPPED)
        self.assertEqual(tab["gas"], "O2")
        bins = {(lo, hi): (w, k) for lo, hi, w, k in tab["bins"]}
        for lo, hi in ((1250.0, 1300.0), (680.0, 690.0), (760.0, 780.0)):
            self.assertIn((lo, hi), bins, "every O2 band has its bin")
        w, k = bins[(760.0, 780.0)]
        ip = int(np.argmin(abs(np.log(np.array(tab["pressure_hpa"]) / 1013.25))))
        it = tab["temperature_k"].index(260.0)
        p = tab["pressure_hpa"][ip]
        lineset = kg.LineSet(kg.read_hitran(O2_FILE), kg.PartitionSums(PART))
        _, sigma = kg.node_cross_section(lineset, 1e7 / 780, 1e7 / 760, p, 260.0)
        cols = kg.column_from_km_atm(PATHS)
        lbl = kg.band_transmittance_lbl(sigma, cols)
        t_k = kg.band_transmittance_k(k[:, 0, ip, it], w, cols)
        report(f"shipped table A band p={p:.4g} hPa T=260 K", lbl, t_k)
        np.testing.assert_allclose(t_k, lbl, atol=0.005, rtol=0)


if __name__ == "__main__":
    unittest.main()
