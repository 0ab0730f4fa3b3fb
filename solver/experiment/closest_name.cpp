#include "experiment/closest_name.hpp"

#include <algorithm>
#include <cctype>
#include <vector>

namespace solstrata::experiment {

std::size_t edit_distance(std::string_view a, std::string_view b) {
  // d[i][j] = distance between the first i characters of a and the first j of b, kept as three
  // rolling rows (the transposition looks two rows back).
  const std::size_t n = b.size();
  std::vector<std::size_t> prev2(n + 1), prev(n + 1), cur(n + 1);
  for (std::size_t j = 0; j <= n; ++j) prev[j] = j;
  for (std::size_t i = 1; i <= a.size(); ++i) {
    cur[0] = i;
    for (std::size_t j = 1; j <= n; ++j) {
      const std::size_t cost = a[i - 1] == b[j - 1] ? 0 : 1;
      cur[j] = std::min({prev[j] + 1, cur[j - 1] + 1, prev[j - 1] + cost});
      if (i > 1 && j > 1 && a[i - 1] == b[j - 2] && a[i - 2] == b[j - 1]) {
        cur[j] = std::min(cur[j], prev2[j - 2] + 1);
      }
    }
    std::swap(prev2, prev);
    std::swap(prev, cur);
  }
  return prev[n];
}

namespace {
std::string lower(std::string_view s) {
  std::string out(s);
  for (char& c : out) c = static_cast<char>(std::tolower(static_cast<unsigned char>(c)));
  return out;
}
}  // namespace

std::string closest_name(std::string_view name, std::span<const std::string> candidates) {
  const std::string key = lower(name);
  const std::size_t limit = key.size() <= 4 ? 1 : key.size() <= 8 ? 2 : 3;
  std::string best;
  std::size_t best_distance = limit + 1;
  for (const std::string& candidate : candidates) {
    const std::size_t d = edit_distance(key, lower(candidate));
    if (d < best_distance) {
      best_distance = d;
      best = candidate;
    }
  }
  return best;
}

}  // namespace solstrata::experiment
