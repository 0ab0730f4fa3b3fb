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
  std::string best;
  std::size_t best_distance = static_cast<std::size_t>(-1);
  for (const std::string& candidate : candidates) {
    const std::string c = lower(candidate);
    // Allowed edits grow with the longer name (1 up to 4 characters, 2 up to 8, then a quarter of
    // the length, at least 3); a name that is a prefix of at least 4 characters of the other (a
    // unit suffix left off, an abbreviation) counts as close too.
    const std::size_t longer = std::max(key.size(), c.size());
    const std::size_t limit = longer <= 4 ? 1 : longer <= 8 ? 2 : std::max<std::size_t>(3, longer / 4);
    const bool prefix = std::min(key.size(), c.size()) >= 4 &&
                        (c.compare(0, key.size(), key) == 0 || key.compare(0, c.size(), c) == 0);
    const std::size_t d = edit_distance(key, c);
    if ((d <= limit || prefix) && d < best_distance) {
      best_distance = d;
      best = candidate;
    }
  }
  return best;
}

}  // namespace solstrata::experiment
