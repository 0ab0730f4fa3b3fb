// Reading back what Hdf5Writer wrote: for tests and tools (the HDF5 C++ API behind a plain API).
#pragma once

#include <cstddef>
#include <filesystem>
#include <map>
#include <string>
#include <variant>
#include <vector>

namespace solstrata::io {

/// An attribute's value: text, or numbers (integers are converted to double).
using AttributeValue = std::variant<std::string, std::vector<double>>;

/// One variable as stored.
struct StoredVariable {
  std::vector<std::string> dimensions;  ///< names of the attached dimension scales, in order
  std::vector<std::size_t> shape;       ///< extent along each dimension (points)
  std::vector<double> values;           ///< numeric contents in C order (empty for text)
  std::vector<std::string> texts;       ///< text contents in C order (empty for numbers)
  std::map<std::string, AttributeValue> attributes;  ///< text and numeric attributes by name
};

/// Reads variable `name` of an HDF5 file. Throws OutputError when the file or variable cannot
/// be read.
StoredVariable read_variable(const std::filesystem::path& file, const std::string& name);
/// The file's global (root group) text and numeric attributes.
std::map<std::string, AttributeValue> read_global_attributes(const std::filesystem::path& file);
/// Names of the datasets in the root group, in creation order where the file tracks it.
std::vector<std::string> list_datasets(const std::filesystem::path& file);

/// Convenience: an attribute as text (throws OutputError when absent or not text).
std::string text_attribute(const std::map<std::string, AttributeValue>& attributes,
                           const std::string& name);

}  // namespace solstrata::io
