// Times the column optics (Rayleigh + ozone + aerosol, mixed) of the standard atmosphere on the
// default spectral grid. Prints one line per case:
//   <case>: <X> ns per layer-point
// A layer-point is one layer at one spectral point. Best of several repetitions, single thread.
#include <algorithm>
#include <chrono>
#include <cstdio>
#include <cstdlib>
#include <cstring>

#include "atmos/standard_atmosphere.hpp"
#include "bench_common.hpp"
#include "optics/column_optics.hpp"

using namespace solstrata;

namespace {

}  // namespace

int main(int argc, char** argv) {
  int reps = 20;
  for (int i = 1; i < argc; ++i) {
    if (!std::strcmp(argv[i], "--help") || !std::strcmp(argv[i], "-h")) {
      std::printf("usage: column_optics_bench [--reps R]\n"
                  "Times build_column_optics; prints '<case>: <X> ns per layer-point'.\n");
      return 0;
    }
    if (i + 1 < argc && !std::strcmp(argv[i], "--reps")) reps = std::atoi(argv[++i]);
  }
  const atmos::Profile p = atmos::make_us_standard_1976();
  const spectrum::Grid g = spectrum::make_grid(spectrum::default_segments(), spectrum::default_bands());
  const optics::AerosolSpec a = optics::from_preset(optics::AerosolType::continental_moderate, 0.2);
  const double n = double(p.n_layers()) * double(g.size());
  std::printf("# %zu layers x %zu points, best of %d, single thread\n", p.n_layers(), g.size(), reps);
  double checksum = 0.0;
  for (bool tdep : {false, true}) {
    optics::OpticsOptions o;
    o.ozone_temperature_dependence = tdep;
    const double t = bench::best_seconds(reps, [&] { checksum += optics::build_column_optics(p, g, a, o).tau[0]; });
    std::printf("column optics%s: %.2f ns per layer-point\n",
                tdep ? " with ozone temperature dependence" : "", 1e9 * t / n);
  }
  std::printf("# checksum %.6e\n", checksum);
  return 0;
}
