#include "io/hdf5_reader.hpp"

#include <H5Cpp.h>
#include <hdf5_hl.h>

#include <cstdlib>
#include <optional>

#include "io/atomic_file.hpp"

namespace solstrata::io {

namespace {

std::optional<AttributeValue> read_attribute(const H5::Attribute& attr) {
  const H5T_class_t type_class = attr.getTypeClass();
  const H5::DataSpace space = attr.getSpace();
  if (type_class == H5T_STRING) {
    if (space.getSimpleExtentType() == H5S_NULL) return AttributeValue(std::string());
    const H5::StrType type = attr.getStrType();
    if (type.isVariableStr()) {
      std::string text;
      attr.read(type, text);
      return AttributeValue(text);
    }
    std::string buffer(type.getSize(), '\0');
    attr.read(type, buffer.data());
    buffer.resize(buffer.find('\0') == std::string::npos ? buffer.size() : buffer.find('\0'));
    return AttributeValue(buffer);
  }
  if (type_class == H5T_FLOAT || type_class == H5T_INTEGER) {
    std::vector<double> values(static_cast<std::size_t>(space.getSimpleExtentNpoints()));
    attr.read(H5::PredType::NATIVE_DOUBLE, values.data());
    return AttributeValue(values);
  }
  return std::nullopt;  // references and compounds of the dimension-scale bookkeeping
}

std::map<std::string, AttributeValue> read_attributes(const H5::H5Object& object) {
  std::map<std::string, AttributeValue> out;
  const int n = object.getNumAttrs();
  for (int i = 0; i < n; ++i) {
    const H5::Attribute attr = object.openAttribute(static_cast<unsigned>(i));
    if (auto value = read_attribute(attr)) out.emplace(attr.getName(), std::move(*value));
  }
  return out;
}

herr_t scale_name(hid_t, unsigned, hid_t scale, void* data) {
  char name[256];
  const ssize_t length = H5Iget_name(scale, name, sizeof name);
  if (length < 0) return -1;
  std::string text(name, static_cast<std::size_t>(length));
  if (!text.empty() && text.front() == '/') text.erase(0, 1);
  *static_cast<std::string*>(data) = text;
  return 1;  // stop after the first scale
}

[[noreturn]] void fail(const std::filesystem::path& file, const std::string& what,
                       const H5::Exception& e) {
  throw OutputError(file.string() + ": cannot read " + what + ": " + e.getDetailMsg());
}

H5::H5File open(const std::filesystem::path& file) {
  H5::Exception::dontPrint();
  try {
    return H5::H5File(file.string(), H5F_ACC_RDONLY);
  } catch (const H5::Exception& e) {
    fail(file, "the file", e);
  }
}

}  // namespace

StoredVariable read_variable(const std::filesystem::path& file, const std::string& name) {
  H5::H5File f = open(file);
  try {
    const H5::DataSet ds = f.openDataSet(name);
    StoredVariable out;
    const H5::DataSpace space = ds.getSpace();
    const int rank = space.getSimpleExtentNdims();
    std::vector<hsize_t> dims(static_cast<std::size_t>(rank));
    if (rank > 0) space.getSimpleExtentDims(dims.data());
    for (int i = 0; i < rank; ++i) {
      out.shape.push_back(static_cast<std::size_t>(dims[static_cast<std::size_t>(i)]));
      std::string dim_name;
      if (H5DSis_scale(ds.getId()) > 0) {
        dim_name = name;  // a coordinate variable is its own dimension
      } else if (H5DSiterate_scales(ds.getId(), static_cast<unsigned>(i), nullptr, scale_name,
                                    &dim_name) < 0) {
        dim_name.clear();
      }
      out.dimensions.push_back(dim_name);
    }
    const auto count = static_cast<std::size_t>(space.getSimpleExtentNpoints());
    if (ds.getTypeClass() == H5T_STRING) {
      const H5::StrType type = ds.getStrType();
      if (!type.isVariableStr())
        throw OutputError(file.string() + ": " + name + ": fixed-length text is not supported");
      std::vector<char*> pointers(count, nullptr);
      ds.read(pointers.data(), type);
      for (char* p : pointers) out.texts.emplace_back(p == nullptr ? "" : p);
      H5Dvlen_reclaim(type.getId(), space.getId(), H5P_DEFAULT, pointers.data());
    } else {
      out.values.resize(count);
      ds.read(out.values.data(), H5::PredType::NATIVE_DOUBLE);
    }
    out.attributes = read_attributes(ds);
    return out;
  } catch (const H5::Exception& e) {
    fail(file, "variable '" + name + "'", e);
  }
}

std::map<std::string, AttributeValue> read_global_attributes(const std::filesystem::path& file) {
  H5::H5File f = open(file);
  try {
    return read_attributes(f.openGroup("/"));
  } catch (const H5::Exception& e) {
    fail(file, "the global attributes", e);
  }
}

std::vector<std::string> list_datasets(const std::filesystem::path& file) {
  H5::H5File f = open(file);
  try {
    std::vector<std::string> out;
    const H5::Group root = f.openGroup("/");
    for (hsize_t i = 0; i < root.getNumObjs(); ++i) {
      // Creation order where the file tracks it (ours and netCDF-4's do), else name order.
      std::string name;
      for (H5_index_t index : {H5_INDEX_CRT_ORDER, H5_INDEX_NAME}) {
        const ssize_t length =
            H5Lget_name_by_idx(root.getId(), ".", index, H5_ITER_INC, i, nullptr, 0, H5P_DEFAULT);
        if (length < 0) continue;
        name.assign(static_cast<std::size_t>(length) + 1, '\0');
        H5Lget_name_by_idx(root.getId(), ".", index, H5_ITER_INC, i, name.data(), name.size(),
                           H5P_DEFAULT);
        name.resize(static_cast<std::size_t>(length));
        break;
      }
      if (!name.empty() && root.childObjType(name) == H5O_TYPE_DATASET) out.push_back(name);
    }
    return out;
  } catch (const H5::Exception& e) {
    fail(file, "the list of variables", e);
  }
}

std::string text_attribute(const std::map<std::string, AttributeValue>& attributes,
                           const std::string& name) {
  const auto it = attributes.find(name);
  if (it == attributes.end()) throw OutputError("no attribute '" + name + "'");
  if (const auto* text = std::get_if<std::string>(&it->second)) return *text;
  throw OutputError("attribute '" + name + "' is not text");
}

}  // namespace solstrata::io
