// The `solstrata` command: reads the command line (CLI11: one options struct and one setup function
// per subcommand), dispatches to the subcommand and maps outcomes to exit codes (0 success, 1 the
// run failed, 2 bad input or usage, 130 interrupted). This is the only file that includes CLI11, so
// the header is compiled once.
#include <CLI/CLI.hpp>

#include <algorithm>
#include <cmath>
#include <cstdio>
#include <cstdlib>
#include <filesystem>
#include <iostream>
#include <sstream>
#include <string>
#include <vector>

#include "app/commands.hpp"
#include "app/demo.hpp"
#include "experiment/closest_name.hpp"
#include "experiment/experiment.hpp"
#include "rt/closure.hpp"
#include "io/hdf5_writer.hpp"
#include "version.hpp"

namespace {

using namespace solstrata;

constexpr const char* kExitCodes =
    "exit codes: 0 success, 1 the run failed, 2 bad input or bad usage, 130 interrupted (resumable)";

// ---------------------------------------------------------------------------------------------
// Validators. Each checks the text of one value and returns "" or what was expected; CLI11 puts
// the option's name in front ("--jobs: expected ...").

/// A whole number from lo to hi (and even, if asked), named `what` in the message.
CLI::Validator whole_number(long lo, long hi, const std::string& what, bool even = false) {
  return CLI::Validator(
      [=](std::string& text) -> std::string {
        long v = 0;
        std::size_t used = 0;
        try {
          v = std::stol(text, &used);
        } catch (...) {
          used = 0;
        }
        if (text.empty() || used != text.size() || v < lo || v > hi || (even && v % 2 != 0)) {
          return "expected " + std::string(even ? "an even" : "a whole") + " number of " + what + " from " +
                 std::to_string(lo) + " to " + std::to_string(hi) + ", got '" + text + "'";
        }
        return {};
      },
      "");
}

/// A finite number x with lo <= x and x < hi (or x <= hi when `hi_inclusive`); `symbol` and `unit`
/// render the rule as in the experiment-file messages: "expected 0 <= DEG < 90 (in degrees)".
CLI::Validator number_in(double lo, double hi, bool hi_inclusive, const std::string& symbol, const std::string& unit) {
  return CLI::Validator(
      [=](std::string& text) -> std::string {
        double v = 0;
        std::size_t used = 0;
        try {
          v = std::stod(text, &used);
        } catch (...) {
          used = 0;
        }
        const bool ok = !text.empty() && used == text.size() && std::isfinite(v) && v >= lo &&
                        (hi_inclusive ? v <= hi : v < hi);
        if (ok) return {};
        std::ostringstream rule;
        rule << "expected " << lo << " <= " << symbol << (hi_inclusive ? " <= " : " < ") << hi;
        if (!unit.empty()) rule << " (in " << unit << ")";
        return rule.str() + ", got '" + text + "'";
      },
      "");
}

/// One of `names`, with a suggestion for a near miss.
CLI::Validator one_of(std::vector<std::string> names) {
  return CLI::Validator(
      [names](std::string& text) -> std::string {
        if (std::find(names.begin(), names.end(), text) != names.end()) return {};
        std::string list;
        for (std::size_t i = 0; i < names.size(); ++i) list += (i ? ", " : "") + names[i];
        std::string msg = "expected one of " + list + ", got '" + text + "'";
        const std::string near = experiment::closest_name(text, names);
        if (!near.empty()) msg += " (did you mean '" + near + "'?)";
        return msg;
      },
      "");
}

/// A file that exists and is not a directory.
CLI::Validator readable_file() {
  return CLI::Validator(
      [](std::string& text) -> std::string {
        std::error_code ec;
        const std::filesystem::file_status st = std::filesystem::status(text, ec);
        if (!std::filesystem::exists(st)) return "no such file '" + text + "'";
        if (std::filesystem::is_directory(st)) return "'" + text + "' is a directory, not an experiment file";
        return {};
      },
      "");
}

// ---------------------------------------------------------------------------------------------
// Help layout: usage first, then the description, arguments, options, commands and the footer,
// in lower-case headings.

class HelpFormatter : public CLI::Formatter {
 public:
  HelpFormatter() {
    label("Usage", "usage");
    label("OPTIONS", "options");
    label("SUBCOMMAND", "<command>");
    label("Positionals", "arguments");
    label("REQUIRED", "");
    column_width(22);
  }
  std::string make_help(const CLI::App* app, std::string name, CLI::AppFormatMode mode) const override {
    if (mode == CLI::AppFormatMode::Sub) return make_expanded(app);
    std::string out = make_usage(app, name);
    if (!app->get_description().empty()) out += "\n" + app->get_description() + "\n";
    out += make_positionals(app) + make_groups(app, mode) + make_subcommands(app, mode);
    if (!app->get_footer().empty()) out += "\n" + app->get_footer() + "\n";
    for (std::size_t at; (at = out.find("\n\n\n")) != std::string::npos;) out.erase(at, 1);
    return out;
  }
  std::string make_usage(const CLI::App* app, std::string name) const override {
    // "usage: solstrata run EXPERIMENT.yaml [options]": the arguments before the options.
    std::string usage = CLI::Formatter::make_usage(app, name);
    const std::string opts = " [" + get_label("OPTIONS") + "]";
    const std::size_t at = usage.find(opts);
    if (at != std::string::npos) {
      usage.erase(at, opts.size());
      usage.insert(usage.find_last_not_of('\n') + 1, opts);
    }
    return usage;
  }
  /// In the list of commands, only the first line (the summary) of each command's description.
  std::string make_subcommand(const CLI::App* sub) const override {
    const std::string& d = sub->get_description();
    std::ostringstream out;
    CLI::detail::format_help(out, sub->get_name(), d.substr(0, d.find('\n')), get_column_width());
    return out.str();
  }
};

// ---------------------------------------------------------------------------------------------
// One setup function per subcommand: its options, bound to its options struct.

void setup_run(CLI::App& app, app::RunOptions& o) {
  CLI::App* run = app.add_subcommand("run",
      "run an experiment file and write its results (HDF5, optional CSV)\n\n"
      "Runs the experiment (one scenario, a sweep or a time series): builds the optics of the atmosphere\n"
      "on the spectral grid, solves the two-stream equations at every spectral point, and writes a\n"
      "netCDF-4/HDF5 file with level fluxes, heating rates, transmittances and surface products.\n"
      "Prints a summary table.");
  run->add_option("EXPERIMENT.yaml", o.experiment, "the experiment file (keys: docs/experiment-keys.md)")
      ->required()
      ->type_name("")
      ->check(readable_file());
  run->add_option("-o,--output", o.output,
                  "HDF5 file to write (default: output.file of the experiment,\n"
                  "else EXPERIMENT.h5 in the working directory)")
      ->type_name("FILE");
  run->add_option("--csv", o.csv, "also write a flat CSV summary (one row per band and a broadband row)")
      ->type_name("FILE");
  run->add_flag("--spectral", o.spectral, "also write per-bin level fluxes (wavelength dimension)");
  run->add_option("-j,--jobs", o.jobs, "worker threads for sweeps, 1 to 1024 (default: the machine's cores)")
      ->type_name("N")
      ->check(whole_number(1, 1024, "threads"));
  run->add_flag("--resume", o.resume, "continue an interrupted sweep from its checkpoint (OUT.h5.partial)");
  run->add_flag("-q,--quiet", o.quiet, "print nothing but errors (no progress line)");
  run->footer(
      "The output file is written under a temporary name and renamed when complete: a failed run\n"
      "leaves no file behind. A sweep records each finished scenario in OUT.h5.partial (append-only,\n"
      "checksummed) as it goes; after Ctrl-C, SIGTERM or a crash, 'solstrata run EXP.yaml --resume'\n"
      "continues where it stopped and ends with the same file as an uninterrupted run.\n"
#if SOLSTRATA_MPI
      "Under mpirun (this is an MPI build), the cases are split over the ranks, each rank keeps its\n"
      "own checkpoint OUT.h5.partial.rank<R>, and --resume works with any number of ranks.\n"
#endif
      "\n" +
      std::string(kExitCodes));
}

void setup_check(CLI::App& app, app::RunOptions& o) {
  CLI::App* check = app.add_subcommand("check",
      "validate an experiment file without running it\n\n"
      "Reads and validates the experiment (every scenario of a sweep) without running it, and prints\n"
      "what a run would do: scenario count and estimated output size.\n"
      "Errors name the file, line, column and key, and what was expected.");
  check->add_option("EXPERIMENT.yaml", o.experiment, "the experiment file")->required()->type_name("")->check(readable_file());
  check->footer("exit codes: 0 valid, 2 invalid (message on stderr)");
}

void setup_accuracy(CLI::App& app, app::AccuracyOptions& o) {
  CLI::App* acc = app.add_subcommand("accuracy",
      "compare the two-stream answer with the exact multi-stream reference\n\n"
      "Runs the experiment twice - with its two-stream closure and with the exact multi-stream reference\n"
      "(discrete ordinates, Henyey-Greenstein phase function, delta-M) - and reports how far the fast\n"
      "answer is from the exact one for your atmosphere: per band and broadband, the difference of the\n"
      "direct, diffuse, upward and net flux at the top and at the surface (W m-2 and percent), the\n"
      "largest difference over all levels, and the heating-rate difference. For a sweep, a deterministic\n"
      "sample of scenarios (evenly spaced over the scenario index) is compared.");
  acc->add_option("EXPERIMENT.yaml", o.experiment, "the experiment file")->required()->type_name("")->check(readable_file());
  acc->add_option("--streams", o.streams,
                  "total number of reference streams (both hemispheres: N/2 directions\n"
                  "each), even, 4 to 64 (default 16; 32 for tighter checks)")
      ->type_name("N")
      ->check(whole_number(4, 64, "streams", true));
  acc->add_option("--sample", o.sample, "scenarios of a sweep to compare, 1 to 100000 (default 5)")
      ->type_name("K")
      ->check(whole_number(1, 100000, "scenarios"));
  acc->add_option("-j,--jobs", o.jobs,
                  "worker threads, 1 to 1024 (default: the machine's cores); the results do not\n"
                  "depend on it")
      ->type_name("N")
      ->check(whole_number(1, 1024, "threads"));
  acc->add_option("-o,--output", o.output, "also write the full comparison (per band and level) as HDF5")
      ->type_name("FILE");
  acc->add_flag("-q,--quiet", o.quiet, "no table");
  acc->footer("exit codes: 0 success, 1 the run failed, 2 bad input or bad usage");
}

void setup_demo(CLI::App& app, app::DemoOptions& o, std::string& closure) {
  CLI::App* demo = app.add_subcommand("demo",
      "solve a built-in demo column and print its level fluxes\n\n"
      "Solves a small invented six-layer column (one visible band) and prints direct, diffuse and upward\n"
      "fluxes at every level.");
  demo->add_option("--sza", o.solar_zenith_deg, "solar zenith angle in degrees, 0 <= DEG < 90 (default 30)")
      ->type_name("DEG")
      ->check(number_in(0, 90, false, "DEG", "degrees"));
  demo->add_option("--albedo", o.albedo, "Lambertian surface albedo, 0 <= A <= 1 (default 0.2)")
      ->type_name("A")
      ->check(number_in(0, 1, true, "A", ""));
  std::vector<std::string> closures;
  for (rt::Closure c : rt::kAllClosures) closures.emplace_back(rt::to_string(c));
  std::string list;
  for (std::size_t i = 0; i < closures.size(); ++i) list += (i ? ", " : "") + closures[i];
  // The closure is read as text and turned into the enum after parsing (see main).
  demo->add_option("--closure", closure, "two-stream closure: " + list + "\n(default delta_eddington)")
      ->type_name("NAME")
      ->check(one_of(closures));
  demo->footer("exit codes: 0 success, 2 bad usage");
}

/// The subcommand named by the first argument, or null.
const CLI::App* named_command(const CLI::App& app, const std::vector<std::string>& args) {
  if (args.empty()) return nullptr;
  for (const CLI::App* sub : app.get_subcommands([](const CLI::App*) { return true; }))
    if (sub->get_name() == args.front()) return sub;
  return nullptr;
}

/// The one error style: "solstrata[ COMMAND]: MESSAGE" and where to find the usage.
int usage_error(const std::string& command, const std::string& message) {
  const std::string who = command.empty() ? "solstrata" : "solstrata " + command;
  std::cerr << who << ": " << message << "\nRun '" << who << " --help' for usage.\n";
  return app::kExitBadInput;
}

}  // namespace

/// The exit code of a command that writes files. After a write the system refused (disk full,
/// file-size limit) an HDF5 file may be abandoned unclosed, and HDF5's shutdown at exit would
/// crash on it (io::hdf5_file_abandoned): then the streams are flushed and the process ends
/// without the library's exit handlers. The temporary file and the lock are already removed.
static int end_after_writing(int rc) {
  if (!io::hdf5_file_abandoned()) return rc;
  std::cout.flush();
  std::cerr.flush();
  std::fflush(nullptr);
  std::_Exit(rc);
}

int main(int argc, char** argv) {
  std::vector<std::string> args(argv + 1, argv + argc);

  CLI::App app("clear-sky shortwave fluxes of a layered atmosphere (two-stream solver)", "solstrata");
  app.formatter(std::make_shared<HelpFormatter>());
  app.set_help_flag("-h,--help", "show this help (also 'solstrata help [COMMAND]')");
  app.option_defaults()->group("options");
  bool show_version = false;
  app.add_flag("--version", show_version, "show the version and the built-in data directory");
  app.footer(
      "Experiment keys: docs/experiment-keys.md; examples in config/.\n"
      "Run 'solstrata <command> --help' for the options of a command.\n\n"
      "exit codes: 0 success, 1 the run failed, 2 bad input or bad usage, 130 a sweep was interrupted\n"
      "(resume it with run --resume)");

  app::RunOptions run_options, check_options;
  app::AccuracyOptions accuracy_options;
  app::DemoOptions demo_options;
  std::string closure_name{rt::to_string(demo_options.closure)};
  setup_run(app, run_options);
  setup_check(app, check_options);
  setup_accuracy(app, accuracy_options);
  setup_demo(app, demo_options, closure_name);
  app.get_help_ptr()->group("options");
  app.allow_extras();  // unknown arguments are reported below, with a suggestion
  for (CLI::App* sub : app.get_subcommands([](const CLI::App*) { return true; })) {
    sub->group("commands");
    sub->get_help_ptr()->group("options");
    sub->allow_extras();
  }

  if (args.empty()) {
    std::cerr << app.help();
    return app::kExitBadInput;
  }
  // 'solstrata help' and 'solstrata help COMMAND' are --help spelt as a word.
  if (args.front() == "help") {
    args.erase(args.begin());
    args.resize(std::min<std::size_t>(args.size(), 1));
    args.emplace_back("--help");
  }
  const CLI::App* command = named_command(app, args);
  const std::string command_name = command ? command->get_name() : "";
  if (!command && !args.front().starts_with("-")) {
    std::vector<std::string> names;
    for (const CLI::App* sub : app.get_subcommands([](const CLI::App*) { return true; }))
      names.push_back(sub->get_name());
    std::string msg = "unknown command '" + args.front() + "'";
    const std::string near = experiment::closest_name(args.front(), names);
    if (!near.empty()) msg += " (did you mean '" + near + "'?)";
    return usage_error("", msg);
  }

  std::vector<std::string> reversed(args.rbegin(), args.rend());  // CLI11 takes them last first
  try {
    app.parse(reversed);
  } catch (const CLI::CallForHelp&) {
    std::cout << app.help();
    return app::kExitOk;
  } catch (const CLI::RequiredError& e) {
    const std::string what = e.what();
    if (what.starts_with("EXPERIMENT.yaml")) return usage_error(command_name, "missing the experiment file (EXPERIMENT.yaml)");
    return usage_error(command_name, what);
  } catch (const CLI::ArgumentMismatch& e) {
    // CLI11 says "--jobs: 1 required N missing"; say which value is missing.
    const std::string what = e.what();
    const CLI::App& in = command ? *command : app;
    const std::string name = what.substr(0, what.find(':'));
    for (const CLI::Option* opt : in.get_options())
      if (opt->check_name(name) && opt->get_type_size() != 0)
        return usage_error(command_name, name + " needs a value (" + opt->get_type_name() + ")");
    return usage_error(command_name, what);
  } catch (const CLI::ParseError& e) {
    return usage_error(command_name, e.what());
  }
  if (const std::vector<std::string> extra = app.remaining(true); !extra.empty()) {
    const CLI::App& in = command ? *command : app;
    const std::string& x = extra.front();
    if (!x.starts_with("-")) return usage_error(command_name, "unexpected argument '" + x + "'");
    std::vector<std::string> names;
    for (const CLI::Option* opt : in.get_options()) {
      for (const std::string& l : opt->get_lnames()) names.push_back("--" + l);
      for (const std::string& sn : opt->get_snames()) names.push_back("-" + sn);
    }
    const std::string name = x.substr(0, x.find('='));
    std::string msg = "unknown option '" + name + "'";
    const std::string near = experiment::closest_name(name, names);
    if (!near.empty()) msg += " (did you mean '" + near + "'?)";
    return usage_error(command_name, msg);
  }

  if (show_version) {
    std::cout << "solstrata " << kVersion << "\n"
              << "built-in data: " << experiment::default_data_dir().string() << "\n";
    return app::kExitOk;
  }
  if (command_name == "run") return end_after_writing(app::run_command(run_options));
  if (command_name == "check") return app::check_command(check_options);
  if (command_name == "accuracy") return end_after_writing(app::accuracy_command(accuracy_options));
  if (command_name == "demo") {
    demo_options.closure = *rt::parse_closure(closure_name);  // checked by one_of
    return app::run_demo(demo_options, std::cout, std::cerr);
  }
  return usage_error("", "missing the command (run, check, accuracy or demo)");
}
