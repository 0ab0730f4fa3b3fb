// "Did you mean ...?" suggestions for misspelt names.
#pragma once

#include <cstddef>
#include <span>
#include <string>
#include <string_view>

namespace solstrata::experiment {

/// Edit distance (dimensionless count of edits) between a and b, counting insertions, deletions,
/// substitutions and transpositions of two adjacent characters: the "optimal string alignment"
/// variant of the Damerau-Levenshtein distance (Damerau 1964; Levenshtein 1966).
std::size_t edit_distance(std::string_view a, std::string_view b);

/// The candidate closest to `name` (compared without regard to ASCII case), if it is close enough
/// to be a plausible misspelling: at most 1 edit for names up to 4 characters, at most 2 up to 8,
/// then a quarter of the longer length (at least 3); or one name a prefix (>= 4 characters) of the other,
/// e.g. a unit suffix left off. Empty when there is none; ties go to the earliest candidate.
std::string closest_name(std::string_view name, std::span<const std::string> candidates);

}  // namespace solstrata::experiment
