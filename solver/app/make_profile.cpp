// solstrata_make_profile: writes the U.S. Standard Atmosphere 1976 profile YAML.
//   solstrata_make_profile [OUTPUT]   (default: profiles/us_standard_1976.yaml)
#include <exception>
#include <fstream>
#include <iostream>
#include <string>

#include "atmos/standard_atmosphere.hpp"

int main(int argc, char** argv) {
  if (argc > 2 || (argc == 2 && (std::string(argv[1]) == "--help" || std::string(argv[1]) == "-h"))) {
    std::cout << "usage: solstrata_make_profile [OUTPUT]\n"
                 "Writes the U.S. Standard Atmosphere 1976 profile (YAML) to OUTPUT\n"
                 "(default profiles/us_standard_1976.yaml).\n";
    return argc > 2 ? 2 : 0;
  }
  const std::string path = argc == 2 ? argv[1] : "profiles/us_standard_1976.yaml";
  try {
    const std::string text = solstrata::atmos::us_standard_1976_yaml();
    std::ofstream out(path);
    if (!(out << text)) {
      std::cerr << "solstrata_make_profile: cannot write " << path << '\n';
      return 1;
    }
    std::cout << "wrote " << path << '\n';
  } catch (const std::exception& e) {
    std::cerr << "solstrata_make_profile: " << e.what() << '\n';
    return 1;
  }
  return 0;
}
