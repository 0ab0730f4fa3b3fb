// The `solstrata` command: parse the command line, dispatch to a subcommand, map outcomes to exit
// codes (0 success, 1 runtime failure, 2 bad input or usage).
#include <cstdlib>
#include <iostream>
#include <string>
#include <string_view>
#include <vector>

#include "app/commands.hpp"
#include "app/demo.hpp"
#include "experiment/experiment.hpp"
#include "version.hpp"

namespace {

using namespace solstrata;

constexpr const char* kMainHelp = R"(solstrata - clear-sky shortwave fluxes of a layered atmosphere (two-stream solver)

usage: solstrata <command> [options]
       solstrata --help | --version

commands:
  run         run an experiment file and write its results (HDF5, optional CSV)
  check       validate an experiment file without running it
  accuracy    compare the two-stream answer with the exact multi-stream reference
  demo        solve a built-in demo column and print its level fluxes

Experiment keys: docs/experiment-keys.md; examples in config/.

Run 'solstrata <command> --help' for the options of a command.

exit codes: 0 success, 1 the run failed, 2 bad input or bad usage, 130 a sweep was interrupted
(resume it with run --resume)
)";

constexpr const char* kDemoHelp = R"(usage: solstrata demo [options]

Solves a small invented six-layer column (one visible band) and prints direct, diffuse and upward
fluxes at every level.

options:
  --sza DEG        solar zenith angle in degrees, 0 <= DEG < 90 (default 30)
  --albedo A       Lambertian surface albedo, 0 <= A <= 1 (default 0.2)
  --closure NAME   two-stream closure: delta_eddington (default), eddington, quadrature,
                   hemispheric_mean, pifm
  -h, --help       show this help
)";

int usage_error(const std::string& msg) {
  std::cerr << "solstrata: " << msg << "\nRun 'solstrata --help' for usage.\n";
  return 2;
}

bool parse_number(const std::string& text, double& value) {
  try {
    std::size_t used = 0;
    value = std::stod(text, &used);
    return used == text.size();
  } catch (...) {
    return false;
  }
}

int demo_command(const std::vector<std::string>& args) {
  app::DemoOptions o;
  for (std::size_t i = 0; i < args.size(); ++i) {
    const std::string& a = args[i];
    if (a == "-h" || a == "--help") {
      std::cout << kDemoHelp;
      return 0;
    }
    const auto value = [&](const char* name) -> const std::string* {
      if (i + 1 >= args.size()) return nullptr;
      (void)name;
      return &args[++i];
    };
    if (a == "--sza" || a == "--albedo") {
      const std::string* v = value(a.c_str());
      double x = 0;
      if (!v || !parse_number(*v, x)) return usage_error(a + " needs a number");
      if (a == "--sza") {
        if (!(x >= 0 && x < 90)) return usage_error("--sza " + *v + ": expected 0 <= DEG < 90");
        o.solar_zenith_deg = x;
      } else {
        if (!(x >= 0 && x <= 1)) return usage_error("--albedo " + *v + ": expected 0 <= A <= 1");
        o.albedo = x;
      }
    } else if (a == "--closure") {
      const std::string* v = value("--closure");
      if (!v) return usage_error("--closure needs a name");
      auto c = rt::parse_closure(*v);
      if (!c) {
        return usage_error("--closure " + *v +
                           ": expected delta_eddington, eddington, quadrature, hemispheric_mean or pifm");
      }
      o.closure = *c;
    } else {
      return usage_error("demo: unknown option '" + a + "'");
    }
  }
  return app::run_demo(o, std::cout, std::cerr);
}

}  // namespace

int main(int argc, char** argv) {
  std::vector<std::string> args(argv + 1, argv + argc);
  if (args.empty()) {
    std::cerr << kMainHelp;
    return 2;
  }
  const std::string cmd = args.front();
  const std::vector<std::string> rest(args.begin() + 1, args.end());
  if (cmd == "-h" || cmd == "--help" || cmd == "help") {
    std::cout << kMainHelp;
    return 0;
  }
  if (cmd == "--version") {
    std::cout << "solstrata " << kVersion << "\n"
              << "built-in data: " << experiment::default_data_dir().string() << "\n";
    return 0;
  }
  if (cmd == "demo") return demo_command(rest);
  if (cmd == "run") return app::run_command(rest);
  if (cmd == "check") return app::check_command(rest);
  if (cmd == "accuracy") return app::accuracy_command(rest);
  return usage_error("unknown command '" + cmd + "'");
}
