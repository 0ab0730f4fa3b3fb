// Numbers in messages: the shortest default stream form ("1e-05", "0.3", "288.15").
#pragma once

#include <sstream>
#include <string>

namespace solstrata::atmos {

/// `x` as text for an error message (default ostream formatting, 6 significant digits).
inline std::string number_text(double x) {
  std::ostringstream s;
  s << x;
  return s.str();
}

}  // namespace solstrata::atmos
