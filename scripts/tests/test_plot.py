#!/usr/bin/python3
"""Tests of scripts/plot on small files made by the solstrata binary.

usage: test_plot.py SOLSTRATA_BINARY
Exits 77 (ctest: skipped) when numpy, h5py or matplotlib is missing; scripts/setup installs them.

Checks: the command exits 0 and writes PNG files (signature and IHDR chunk as the PNG
specification, ISO/IEC 15948, defines them) for a single run, a two-axis grid, a one-axis grid, a
zip, a scenario list and a time series; the figures' texts show readable names, not key paths, and state the
value of every swept parameter held fixed; an unknown --x, --y or --fix exits 2 and writes nothing.
"""
import contextlib
import importlib.machinery
import importlib.util
import io
import os
import struct
import subprocess
import sys
import tempfile
import unittest

try:
    import h5py  # noqa: F401
    import matplotlib

    matplotlib.use("Agg")
    import matplotlib.text
    import numpy  # noqa: F401
except ImportError as e:
    print(f"test_plot: skipped, {e}")
    sys.exit(77)

HERE = os.path.dirname(os.path.abspath(__file__))
PLOT = os.path.join(HERE, "..", "plot")
PROFILE = os.path.join(HERE, "..", "..", "profiles", "us_standard_1976.yaml")
BINARY = None

BASE = f"""title: "plot test (invented)"
atmosphere:
  profile: {PROFILE}
aerosol:
  type: continental_moderate
  optical_depth: 0.1
sun:
  solar_zenith_deg: 30
surface:
  albedo: 0.2
"""
SWEEPS = {
    "grid": """sweep:
  grid:
    - {parameter: aerosol.optical_depth, values: [0.05, 0.2, 0.8]}
    - {parameter: sun.solar_zenith_deg, values: [20, 50]}
    - {parameter: surface.albedo, values: [0.1, 0.3]}
""",
    "one": """sweep:
  grid:
    - {parameter: aerosol.optical_depth, range: {from: 0.05, to: 0.5, count: 3, spacing: log}}
""",
    "zip": """sweep:
  zip:
    - {parameter: sun.solar_zenith_deg, values: [10, 40, 70]}
    - {parameter: aerosol.optical_depth, values: [0.05, 0.1, 0.3]}
""",
    "list": """sweep:
  scenario_file: list.csv
""",
}
# A time series: one day in three-hour steps at an invented site (replaces `sun`).
SERIES = BASE.replace("sun:\n  solar_zenith_deg: 30\n", "") + """site: {latitude_deg: 47, longitude_deg: 8, elevation_m: 400}
times:
  start: "2026-06-15T00:00:00+02:00"
  end: "2026-06-15T21:00:00+02:00"
  step_minutes: 180
  daily_totals: true
"""


def png_size(path):
    """(width, height) from the IHDR chunk; fails unless the file starts with the PNG signature."""
    with open(path, "rb") as fh:
        head = fh.read(24)
    assert head[:8] == b"\x89PNG\r\n\x1a\n", f"{path}: not a PNG file"
    assert head[12:16] == b"IHDR", f"{path}: first chunk is not IHDR"
    return struct.unpack(">II", head[16:24])


def load_plot_module():
    loader = importlib.machinery.SourceFileLoader("solstrata_plot", PLOT)
    spec = importlib.util.spec_from_loader("solstrata_plot", loader)
    module = importlib.util.module_from_spec(spec)
    loader.exec_module(module)
    return module


class PlotTest(unittest.TestCase):
    @classmethod
    def setUpClass(cls):
        cls.tmp = tempfile.TemporaryDirectory(prefix="solstrata_plot_test_")
        cls.dir = cls.tmp.name
        with open(os.path.join(cls.dir, "list.csv"), "w") as fh:
            fh.write("aerosol.optical_depth,sun.solar_zenith_deg\n0.05,20\n0.3,20\n0.3,60\n")
        cls.files = {}
        for name, text in [("single", BASE), ("series", SERIES)] + [(k, BASE + v) for k, v in SWEEPS.items()]:
            yaml = os.path.join(cls.dir, name + ".yaml")
            with open(yaml, "w") as fh:
                fh.write(text)
            out = os.path.join(cls.dir, name + ".h5")
            args = [BINARY, "run", yaml, "-q", "-j", "1", "-o", out] + (["--spectral"] if name == "single" else [])
            subprocess.run(args, check=True, cwd=cls.dir)
            cls.files[name] = out

    @classmethod
    def tearDownClass(cls):
        cls.tmp.cleanup()

    def plot(self, name, *args):
        out = os.path.join(self.dir, "fig_" + name + "_" + str(abs(hash(args))))
        env = dict(os.environ, MPLBACKEND="Agg")
        r = subprocess.run([sys.executable, PLOT, self.files[name], "--out", out, *args], env=env,
                           capture_output=True, text=True)
        pngs = sorted(os.listdir(out)) if os.path.isdir(out) else []
        return r, out, pngs

    def test_single_run_writes_every_figure(self):
        r, out, pngs = self.plot("single")
        self.assertEqual(r.returncode, 0, r.stderr)
        self.assertEqual(pngs, ["single_bands.png", "single_heating.png", "single_profiles.png", "single_spectra.png"])
        for p in pngs:
            w, h = png_size(os.path.join(out, p))
            self.assertGreater(w, 300)
            self.assertGreater(h, 300)
            self.assertIn("wrote " + os.path.join(out, p), r.stdout)

    def test_every_kind_of_sweep_gets_a_figure(self):
        expected = {"grid": ["grid_map.png", "grid_sweep.png", "grid_sweep_bands.png"],
                    "one": ["one_sweep.png", "one_sweep_bands.png"], "zip": ["zip_sweep.png", "zip_sweep_bands.png"],
                    "list": ["list_sweep.png", "list_sweep_bands.png"],
                    "series": ["series_daily.png", "series_series.png"]}
        for name, want in expected.items():
            with self.subTest(sweep=name):
                r, out, pngs = self.plot(name)
                self.assertEqual(r.returncode, 0, r.stderr)
                self.assertEqual(pngs, want)
                for p in pngs:
                    png_size(os.path.join(out, p))

    def test_chosen_axes_and_held_values(self):
        r, out, pngs = self.plot("grid", "--x", "sun.solar_zenith_deg", "--y", "aerosol.optical_depth",
                                 "--fix", "surface.albedo=0.3")
        self.assertEqual(r.returncode, 0, r.stderr)
        self.assertEqual(pngs, ["grid_map.png", "grid_sweep.png", "grid_sweep_bands.png"])

    def test_unknown_parameters_are_errors(self):
        bad = [("grid", ("--x", "aerosol.optical_dept"), "not a swept parameter"),
               ("grid", ("--y", "sun.day_of_year"), "not a swept parameter"),
               ("grid", ("--x", "sun.solar_zenith_deg", "--y", "sun.solar_zenith_deg"), "both"),
               ("grid", ("--fix", "surface.albedo=0.25"), "takes the values 0.1, 0.3"),
               ("grid", ("--fix", "surface.albedo"), "PARAM=VALUE"),
               ("zip", ("--x", "sun.solar_zenith_deg", "--y", "aerosol.optical_depth"), "vary together"),
               ("list", ("--fix", "sun.solar_zenith_deg=20"), "scenario list"),
               ("single", ("--x", "aerosol.optical_depth"), "single run"),
               ("series", ("--fix", "aerosol.optical_depth=0.1"), "time series")]
        # In one process (main() as the command calls it), to keep the test quick.
        plot = load_plot_module()
        for name, args, message in bad:
            with self.subTest(args=args):
                out = os.path.join(self.dir, "bad_" + name)
                err = io.StringIO()
                with contextlib.redirect_stderr(err), contextlib.redirect_stdout(io.StringIO()):
                    code = plot.main([self.files[name], "--out", out, *args])
                self.assertEqual(code, 2, err.getvalue())
                self.assertTrue(err.getvalue().startswith("plot: "), err.getvalue())
                self.assertIn(message, err.getvalue())
                self.assertEqual(os.listdir(out) if os.path.isdir(out) else [], [])
        # And as a command: exit code 2, with a suggestion and the list of swept parameters.
        r, _, pngs = self.plot("grid", "--x", "aerosol.optical_dept")
        self.assertEqual(r.returncode, 2)
        self.assertEqual(pngs, [])
        self.assertIn("did you mean aerosol.optical_depth", r.stderr)
        self.assertIn("swept: aerosol.optical_depth, sun.solar_zenith_deg, surface.albedo", r.stderr)

    def test_figure_texts_use_readable_names_and_state_held_values(self):
        plot = load_plot_module()
        texts = {}

        def capture(fig, out, stem, suffix):
            texts[suffix] = [t.get_text() for t in fig.findobj(matplotlib.text.Text) if t.get_text()]
            matplotlib.pyplot.close(fig)
            return suffix

        plot.save = capture
        with h5py.File(self.files["grid"], "r") as f:
            sw = plot.Sweep(f)
            plot.plot_sweep_lines(f, "grid", self.dir, sw, "aerosol.optical_depth", "sun.solar_zenith_deg",
                                  ["surface.albedo=0.1"], "grid.h5")
            plot.plot_map(f, "grid", self.dir, sw, None, None, None, "grid.h5")
        for suffix in ("sweep", "map"):
            joined = "\n".join(texts[suffix])
            with self.subTest(figure=suffix):
                # Key paths never appear; readable names with units do.
                for path in ("aerosol.optical_depth", "sun.solar_zenith_deg", "surface.albedo"):
                    self.assertNotIn(path, joined)
                self.assertIn("aerosol optical depth at 550 nm", joined)
                self.assertIn("(W m$^{-2}$)" if suffix == "sweep" else "W m$^{-2}$", joined)
                for panel in ("(GHI)", "(DNI)", "(DHI)", "aerosol effect at the surface",
                              "aerosol effect at the top of the atmosphere"):
                    self.assertIn(panel, joined)
        # The held parameter and its value: the one asked for, and by default the middle value
        # (index 1 of [0.05, 0.2, 0.8] for the map, whose axes are the two largest: optical depth and
        # then the first of the two-valued axes, the solar zenith angle).
        self.assertIn("held at: surface albedo 0.1", "\n".join(texts["sweep"]))
        self.assertIn("held at: surface albedo 0.3", "\n".join(texts["map"]))
        self.assertIn("solar zenith angle (°)", "\n".join(texts["sweep"]))
        # Per-band panels: every band that lights the surface, named with its wavelengths.
        with h5py.File(self.files["grid"], "r") as f:
            bands, dark = plot.band_quantities(f)
            plot.plot_sweep_lines(f, "grid", self.dir, sw, None, None, None, "grid.h5", bands, "sweep_bands")
        joined = "\n".join(texts["sweep_bands"])
        for band in ("UV-B: 280-315 nm", "UV-A: 315-400 nm", "PAR: 400-700 nm", "NIR: 700-4000 nm"):
            self.assertIn("surface global, " + band, joined)
        self.assertEqual(dark, ["UV-C: 250-280 nm"])  # absorbed by ozone above the ground

    def test_unknown_key_paths_become_words(self):
        plot = load_plot_module()
        with h5py.File(self.files["grid"], "r") as f:
            self.assertEqual(plot.parameter_label("given_optics.layers[0].optical_depth", f),
                             "given-optics layer 1 optical depth")
            self.assertEqual(plot.parameter_label("aerosol.vertical.mixed_layer_top_km", f),
                             "top of the aerosol mixed layer (km)")
            self.assertEqual(plot.parameter_label("sun.some_new_angle_deg", f), "sun some new angle (°)")
            self.assertEqual(plot.parameter_value("atmosphere.ozone_column_du", f, 300.0), "ozone column 300 DU")


if __name__ == "__main__":
    if len(sys.argv) < 2:
        print(__doc__)
        sys.exit(2)
    BINARY = os.path.abspath(sys.argv.pop(1))
    unittest.main(verbosity=1)
