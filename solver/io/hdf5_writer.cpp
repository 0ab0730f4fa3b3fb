#include "io/hdf5_writer.hpp"

#include <H5Cpp.h>
#include <hdf5_hl.h>

#include <algorithm>
#include <atomic>
#include <cerrno>
#include <cmath>
#include <cstring>
#include <cstdio>
#include <functional>
#include <memory>
#include <optional>
#include <utility>

namespace solstrata::io {

namespace {

/// The NAME that netCDF-4 gives a dimension scale which is not also a variable; readers match
/// the prefix (netCDF-C appends the length in a 10-wide field, as done here).
constexpr const char* kNotAVariable = "This is a netCDF dimension but not a netCDF variable.";

/// Rows per chunk of a growing placeholder dimension (it is never written, only extended).
constexpr hsize_t kScaleChunk = 1024;

/// Names HDF5 dimension scales or netCDF-C use for their own bookkeeping.
bool reserved_attribute(const std::string& name) {
  return name == "DIMENSION_LIST" || name == "REFERENCE_LIST" || name == "CLASS" ||
         name == "NAME" || name == "_Netcdf4Dimid" || name == "_Netcdf4Coordinates" ||
         name == "_NCProperties";
}

bool valid_name(const std::string& name, bool allow_leading_underscore) {
  if (name.empty()) return false;
  const auto alpha = [](char c) { return (c >= 'a' && c <= 'z') || (c >= 'A' && c <= 'Z'); };
  const auto digit = [](char c) { return c >= '0' && c <= '9'; };
  if (!alpha(name[0]) && !(allow_leading_underscore && name[0] == '_')) return false;
  return std::all_of(name.begin(), name.end(),
                     [&](char c) { return alpha(c) || digit(c) || c == '_'; });
}

std::string format_value(double x) {
  char buf[32];
  std::snprintf(buf, sizeof buf, "%.17g", x);
  return buf;
}

}  // namespace

/// Set once a broken file was abandoned (hdf5_file_abandoned()).
static std::atomic<bool> g_abandoned{false};

struct Hdf5Writer::Impl {
  struct Dimension {
    std::string name;
    hsize_t size = 0;
    bool growing = false;
    bool coordinate = false;  // a coordinate variable (else a placeholder dataset)
    H5::DataSet scale;
  };
  struct RowVariable {
    std::string name;
    std::vector<std::size_t> dims;  // indices into dimensions
    H5::DataSet data;
  };

  AtomicOutput output;
  std::unique_ptr<H5::H5File> file;
  std::vector<Dimension> dimensions;
  std::vector<RowVariable> row_variables;
  std::size_t rank_granule = 0;  // defer_rows_to_ranks (0: rows are written here)
  std::vector<std::string> names;  // every dataset written
  /// An HDF5 call failed (a write refused by the system: disk full, EFBIG): the library's state
  /// of this file can no longer be trusted. HDF5 1.10 crashes (SIGSEGV in H5F__close, measured
  /// with a file-size limit) when a file is closed after a failed dataset or file close, so a
  /// broken file is never touched again: its identifiers are abandoned (see abandon()) and the
  /// temporary is removed.
  bool broken = false;

  explicit Impl(const std::filesystem::path& path) : output(path) {}

  [[nodiscard]] std::string where(const std::string& variable) const {
    return output.final_path().string() + (variable.empty() ? "" : ": variable '" + variable + "'");
  }
  [[noreturn]] void fail(const std::string& variable, const std::string& message) const {
    throw OutputError(where(variable) + ": " + message);
  }

  /// Runs an HDF5 action, turning HDF5's exceptions (which are not std::exceptions) into
  /// OutputError with context.
  template <class F>
  auto guarded(const std::string& variable, const char* action, F&& f) -> decltype(f()) {
    if (!file) fail(variable, "the writer is closed (commit() was called)");
    if (broken) fail(variable, "an earlier write to this file failed");
    errno = 0;  // so that system_error_text() reports this call's cause, not an old one
    try {
      return f();
    } catch (const H5::Exception& e) {
      broken = true;
      fail(variable, std::string("HDF5 failed to ") + action + ": " + e.getFuncName() + ": " +
                         e.getDetailMsg() + system_error_text());
    }
  }

  /// The system's reason for the last failed write ("" when errno says nothing): HDF5's own
  /// message does not say why the file system refused (the cause is in its error stack only).
  static std::string system_error_text() {
    const int err = errno;
    if (err == EFBIG || err == ENOSPC || err == EDQUOT || err == EIO || err == EROFS) return std::string(" (") + std::strerror(err) + ")";
    return {};
  }

  /// Hands the file and the datasets this writer holds to a holder that is never destroyed, so
  /// that nothing closes them: used only for a broken file (see broken). The holder stays
  /// reachable (no leak report); the process must end without shutting HDF5 down
  /// (hdf5_file_abandoned()).
  void abandon() noexcept {
    struct Abandoned {
      std::unique_ptr<H5::H5File> file;
      std::vector<Dimension> dimensions;
      std::vector<RowVariable> row_variables;
    };
    static auto* holder = new std::vector<Abandoned>();
    try {
      holder->push_back({std::move(file), std::move(dimensions), std::move(row_variables)});
    } catch (...) {
      (void)file.release();  // no memory for the holder: leak the file rather than close it
    }
    g_abandoned.store(true);
  }

  void claim_name(const std::string& name) {
    if (!valid_name(name, false)) {
      fail(name, "invalid name; use a letter followed by letters, digits or '_'");
    }
    if (std::find(names.begin(), names.end(), name) != names.end()) {
      fail(name, "a dimension or variable of this name was already written");
    }
    names.push_back(name);
  }

  std::size_t dimension_index(const std::string& variable, const std::string& dim) const {
    for (std::size_t i = 0; i < dimensions.size(); ++i) {
      if (dimensions[i].name == dim) return i;
    }
    fail(variable, "unknown dimension '" + dim + "'; declare it before the variables using it");
  }

  static H5::DSetCreatPropList creation_list() {
    H5::DSetCreatPropList plist;
    // netCDF-4 tracks the creation order of attributes so that it can list them as written.
    H5Pset_attr_creation_order(plist.getId(), H5P_CRT_ORDER_TRACKED | H5P_CRT_ORDER_INDEXED);
    return plist;
  }

  void make_scale(H5::DataSet& ds, const std::string& variable, const std::string& scale_name) {
    if (H5DSset_scale(ds.getId(), scale_name.c_str()) < 0) {
      fail(variable, "HDF5 failed to make the dataset a dimension scale");
    }
  }

  void attach_scales(H5::DataSet& ds, const std::string& variable,
                     const std::vector<std::size_t>& dims) {
    for (std::size_t i = 0; i < dims.size(); ++i) {
      if (H5DSattach_scale(ds.getId(), dimensions[dims[i]].scale.getId(),
                           static_cast<unsigned>(i)) < 0) {
        fail(variable, "HDF5 failed to attach dimension '" + dimensions[dims[i]].name + "'");
      }
    }
  }

  std::vector<std::size_t> resolve(const std::string& variable,
                                   const std::vector<std::string>& dims) const {
    std::vector<std::size_t> out;
    for (const std::string& d : dims) {
      const std::size_t idx = dimension_index(variable, d);
      if (std::find(out.begin(), out.end(), idx) != out.end()) {
        fail(variable, "dimension '" + d + "' is listed twice");
      }
      out.push_back(idx);
    }
    return out;
  }

  /// Checks the value count against the dimensions and returns the HDF5 extent.
  std::vector<hsize_t> extent(const std::string& variable, const std::vector<std::size_t>& dims,
                              std::size_t count) const {
    std::vector<hsize_t> shape;
    std::size_t expected = 1;
    std::string shape_text;
    for (std::size_t d : dims) {
      if (dimensions[d].growing) {
        fail(variable, "dimension '" + dimensions[d].name +
                           "' grows; write such variables with define_rows/write_row");
      }
      shape.push_back(dimensions[d].size);
      expected *= dimensions[d].size;
      shape_text += (shape_text.empty() ? "" : " x ") + dimensions[d].name + "(" +
                    std::to_string(dimensions[d].size) + ")";
    }
    if (count != expected) {
      fail(variable, "has " + std::to_string(count) + " values but its dimensions " +
                         (shape_text.empty() ? std::string("(scalar)") : shape_text) + " need " +
                         std::to_string(expected));
    }
    return shape;
  }

  static void check_finite(const Impl& self, const std::string& variable,
                           std::span<const double> values) {
    for (std::size_t i = 0; i < values.size(); ++i) {
      if (!std::isfinite(values[i])) {
        self.fail(variable, "value [" + std::to_string(i) + "] is " + format_value(values[i]) +
                                "; outputs must be finite");
      }
    }
  }

  void check_attributes(const std::string& variable, const VariableAttributes& a,
                        bool numeric) const {
    if (a.long_name.empty()) fail(variable, "needs a long_name");
    if (numeric && a.units.empty()) {
      fail(variable, "needs units (UDUNITS text; \"1\" for a dimensionless quantity)");
    }
  }

  void write_standard_attributes(H5::DataSet& ds, const VariableAttributes& a) {
    if (!a.units.empty()) write_text(ds, "units", a.units);
    write_text(ds, "long_name", a.long_name);
    if (!a.standard_name.empty()) write_text(ds, "standard_name", a.standard_name);
  }

  /// Text attribute as netCDF-C writes one: scalar dataspace, fixed-length ASCII string of the
  /// text's length, NUL-terminated padding; an empty text gets a null dataspace.
  static void write_text(H5::H5Object& object, const std::string& name, std::string_view value) {
    if (object.attrExists(name)) object.removeAttr(name);
    if (value.empty()) {
      H5::StrType type(H5::PredType::C_S1, 1);
      object.createAttribute(name, type, H5::DataSpace(H5S_NULL));
      return;
    }
    H5::StrType type(H5::PredType::C_S1, value.size());
    type.setStrpad(H5T_STR_NULLTERM);
    type.setCset(H5T_CSET_ASCII);
    H5::Attribute attr = object.createAttribute(name, type, H5::DataSpace(H5S_SCALAR));
    attr.write(type, value.data());
  }

  template <class T>
  static void write_numbers(H5::H5Object& object, const std::string& name, const H5::PredType& type,
                            std::span<const T> values) {
    if (object.attrExists(name)) object.removeAttr(name);
    const hsize_t n = values.size();
    H5::Attribute attr = object.createAttribute(name, type, H5::DataSpace(1, &n));
    attr.write(type, values.data());
  }

  /// The variable (or the root group for "") that receives an attribute.
  void with_object(const std::string& variable, const std::function<void(H5::H5Object&)>& f) {
    if (variable.empty()) {
      H5::Group root = file->openGroup("/");
      f(root);
      return;
    }
    if (std::find(names.begin(), names.end(), variable) == names.end()) {
      fail(variable, "no such variable (write it before its attributes)");
    }
    if (std::any_of(dimensions.begin(), dimensions.end(),
                    [&](const Dimension& d) { return d.name == variable && !d.coordinate; })) {
      fail(variable, "is a dimension without coordinate values, which has no attributes");
    }
    H5::DataSet ds = file->openDataSet(variable);
    f(ds);
  }

  void check_attribute_name(const std::string& variable, const std::string& name) const {
    if (!valid_name(name, false) &&
        !(name.size() > 1 && name[0] == '_' && valid_name(name.substr(1), false))) {
      fail(variable, "invalid attribute name '" + name + "'");
    }
    if (reserved_attribute(name)) {
      fail(variable, "attribute name '" + name + "' is reserved by HDF5 or netCDF");
    }
  }

  void write_fixed(const std::string& name, const std::vector<std::string>& dims,
                   const H5::DataType& type, const void* data, std::size_t count,
                   const VariableAttributes& attributes, bool numeric) {
    check_attributes(name, attributes, numeric);
    const std::vector<std::size_t> idx = resolve(name, dims);
    const std::vector<hsize_t> shape = extent(name, idx, count);
    claim_name(name);
    guarded(name, "write the variable", [&] {
      H5::DataSpace space = shape.empty()
                                ? H5::DataSpace(H5S_SCALAR)
                                : H5::DataSpace(static_cast<int>(shape.size()), shape.data());
      H5::DataSet ds = file->createDataSet(name, type, space, creation_list());
      ds.write(data, type);
      attach_scales(ds, name, idx);
      write_standard_attributes(ds, attributes);
    });
  }
};

Hdf5Writer::Hdf5Writer(const std::filesystem::path& path) : impl_(std::make_unique<Impl>(path)) {
  H5::Exception::dontPrint();
  try {
    H5::FileCreatPropList create;
    // As netCDF-4 does: keep the order in which variables and attributes were created.
    H5Pset_link_creation_order(create.getId(), H5P_CRT_ORDER_TRACKED | H5P_CRT_ORDER_INDEXED);
    H5Pset_attr_creation_order(create.getId(), H5P_CRT_ORDER_TRACKED | H5P_CRT_ORDER_INDEXED);
    H5::FileAccPropList access;
    // Closing the file closes everything in it, so commit() never renames a half-flushed file.
    access.setFcloseDegree(H5F_CLOSE_STRONG);
    // No sieve buffer: raw data goes to the file inside H5Dwrite, so that a refused write fails
    // there (and is reported) rather than when a dataset is closed, whose failure HDF5 1.10
    // cannot recover from.
    access.setSieveBufSize(0);
    impl_->file = std::make_unique<H5::H5File>(impl_->output.temp_path().string(), H5F_ACC_TRUNC, create, access);
  } catch (const H5::Exception& e) {
    throw OutputError(impl_->where("") + ": HDF5 cannot create the file " +
                      impl_->output.temp_path().string() + ": " + e.getDetailMsg());
  }
}

Hdf5Writer::~Hdf5Writer() {
  if (!impl_) return;
  if (impl_->broken) {
    impl_->abandon();
    return;  // impl_->output's destructor removes the temporary
  }
  try {
    impl_->row_variables.clear();
    impl_->dimensions.clear();
    if (impl_->file) impl_->file->close();
  } catch (...) {
    // The temporary is removed below whatever state HDF5 is in.
  }
  impl_->file.reset();
  // impl_->output's destructor removes the temporary unless commit() succeeded.
}

Hdf5Writer::Hdf5Writer(Hdf5Writer&&) noexcept = default;
Hdf5Writer& Hdf5Writer::operator=(Hdf5Writer&&) noexcept = default;

const std::filesystem::path& Hdf5Writer::path() const { return impl_->output.final_path(); }
const std::filesystem::path& Hdf5Writer::temp_path() const { return impl_->output.temp_path(); }

void Hdf5Writer::add_dimension(const std::string& name, std::size_t size) {
  if (size == 0) impl_->fail(name, "a fixed dimension needs at least 1 point");
  impl_->claim_name(name);
  impl_->guarded(name, "create the dimension", [&] {
    const hsize_t n = size;
    H5::DataSet ds = impl_->file->createDataSet(name, H5::PredType::IEEE_F32BE,
                                                H5::DataSpace(1, &n), Impl::creation_list());
    char scale_name[96];
    std::snprintf(scale_name, sizeof scale_name, "%s%10d", kNotAVariable, static_cast<int>(size));
    impl_->make_scale(ds, name, scale_name);
    impl_->dimensions.push_back({name, n, false, false, ds});
  });
}

void Hdf5Writer::add_growing_dimension(const std::string& name) {
  impl_->claim_name(name);
  impl_->guarded(name, "create the dimension", [&] {
    const hsize_t zero = 0;
    const hsize_t unlimited = H5S_UNLIMITED;
    H5::DSetCreatPropList plist = Impl::creation_list();
    plist.setChunk(1, &kScaleChunk);
    H5::DataSet ds = impl_->file->createDataSet(name, H5::PredType::IEEE_F32BE,
                                                H5::DataSpace(1, &zero, &unlimited), plist);
    char scale_name[96];
    std::snprintf(scale_name, sizeof scale_name, "%s%10d", kNotAVariable, 0);
    impl_->make_scale(ds, name, scale_name);
    impl_->dimensions.push_back({name, 0, true, false, ds});
  });
}

void Hdf5Writer::add_coordinate(const std::string& name, std::span<const double> values,
                                const VariableAttributes& attributes) {
  if (values.empty()) impl_->fail(name, "a coordinate needs at least 1 value");
  Impl::check_finite(*impl_, name, values);
  impl_->check_attributes(name, attributes, true);
  impl_->claim_name(name);
  impl_->guarded(name, "write the coordinate", [&] {
    const hsize_t n = values.size();
    H5::DataSet ds = impl_->file->createDataSet(name, H5::PredType::NATIVE_DOUBLE,
                                                H5::DataSpace(1, &n), Impl::creation_list());
    ds.write(values.data(), H5::PredType::NATIVE_DOUBLE);
    // A coordinate variable is its own dimension scale, named after itself (as netCDF-4 does).
    impl_->make_scale(ds, name, name);
    impl_->write_standard_attributes(ds, attributes);
    impl_->dimensions.push_back({name, n, false, true, ds});
  });
}

void Hdf5Writer::add_coordinate(const std::string& name, std::span<const std::string> values,
                                const VariableAttributes& attributes) {
  if (values.empty()) impl_->fail(name, "a coordinate needs at least 1 value");
  impl_->check_attributes(name, attributes, false);
  impl_->claim_name(name);
  impl_->guarded(name, "write the coordinate", [&] {
    std::vector<const char*> pointers;
    for (const std::string& v : values) pointers.push_back(v.c_str());
    const H5::StrType type(H5::PredType::C_S1, H5T_VARIABLE);
    const hsize_t n = values.size();
    H5::DataSet ds = impl_->file->createDataSet(name, type, H5::DataSpace(1, &n), Impl::creation_list());
    ds.write(pointers.data(), type);
    impl_->make_scale(ds, name, name);
    impl_->write_standard_attributes(ds, attributes);
    impl_->dimensions.push_back({name, n, false, true, ds});
  });
}

std::size_t Hdf5Writer::dimension_size(const std::string& name) const {
  return impl_->dimensions[impl_->dimension_index("", name)].size;
}

void Hdf5Writer::write(const std::string& name, const std::vector<std::string>& dimensions,
                       std::span<const double> values, const VariableAttributes& attributes) {
  Impl::check_finite(*impl_, name, values);
  impl_->write_fixed(name, dimensions, H5::PredType::NATIVE_DOUBLE, values.data(), values.size(),
                     attributes, true);
}

void Hdf5Writer::write(const std::string& name, const std::vector<std::string>& dimensions,
                       std::span<const int> values, const VariableAttributes& attributes) {
  impl_->write_fixed(name, dimensions, H5::PredType::NATIVE_INT, values.data(), values.size(),
                     attributes, true);
}

void Hdf5Writer::write(const std::string& name, const std::vector<std::string>& dimensions,
                       std::span<const std::string> values, const VariableAttributes& attributes) {
  std::vector<const char*> pointers;
  for (const std::string& s : values) pointers.push_back(s.c_str());
  const H5::StrType type(H5::PredType::C_S1, H5T_VARIABLE);
  impl_->write_fixed(name, dimensions, type, pointers.data(), pointers.size(), attributes, false);
}

void Hdf5Writer::define_rows(const std::string& name, const std::vector<std::string>& dimensions,
                             const VariableAttributes& attributes, double fill) {
  impl_->check_attributes(name, attributes, true);
  if (dimensions.empty()) impl_->fail(name, "a row variable needs at least one dimension");
  const std::vector<std::size_t> idx = impl_->resolve(name, dimensions);
  for (std::size_t i = 1; i < idx.size(); ++i) {
    if (impl_->dimensions[idx[i]].growing) {
      impl_->fail(name, "only the first dimension may grow");
    }
  }
  impl_->claim_name(name);
  impl_->guarded(name, "create the row variable", [&] {
    std::vector<hsize_t> shape, max_shape, chunk;
    for (std::size_t i = 0; i < idx.size(); ++i) {
      const Impl::Dimension& d = impl_->dimensions[idx[i]];
      shape.push_back(d.size);
      max_shape.push_back(d.growing ? H5S_UNLIMITED : d.size);
      chunk.push_back(i == 0 ? 1 : d.size);
    }
    // Small rows are chunked several to a chunk (about 64 KiB), so that a file of 10^5 scenarios
    // is not 10^5 tiny chunks per variable.
    std::size_t per_row = 1;
    for (std::size_t i = 1; i < chunk.size(); ++i) per_row *= chunk[i];
    hsize_t rows = std::max<hsize_t>(1, 8192 / std::max<std::size_t>(1, per_row));
    const Impl::Dimension& first = impl_->dimensions[idx[0]];
    if (!first.growing) rows = std::min<hsize_t>(rows, std::max<std::size_t>(1, first.size));
    if (impl_->rank_granule > 0) {
      hsize_t p = 1;
      while (2 * p <= std::min<hsize_t>(rows, impl_->rank_granule)) p *= 2;
      rows = p;
    }
    chunk[0] = rows;
    H5::DSetCreatPropList plist = Impl::creation_list();
    plist.setChunk(static_cast<int>(chunk.size()), chunk.data());
    plist.setFillValue(H5::PredType::NATIVE_DOUBLE, &fill);
    // Every row is written by the ranks: filling the storage first would write the data twice.
    if (impl_->rank_granule > 0) plist.setFillTime(H5D_FILL_TIME_NEVER);
    const H5::DataSpace space(static_cast<int>(shape.size()), shape.data(), max_shape.data());
    H5::DataSet ds = impl_->file->createDataSet(name, H5::PredType::NATIVE_DOUBLE, space, plist);
    impl_->attach_scales(ds, name, idx);
    impl_->write_standard_attributes(ds, attributes);
    impl_->row_variables.push_back({name, idx, ds});
  });
}

void Hdf5Writer::write_row(const std::string& name, std::size_t row,
                           std::span<const double> values) {
  auto it = std::find_if(impl_->row_variables.begin(), impl_->row_variables.end(),
                         [&](const Impl::RowVariable& v) { return v.name == name; });
  if (it != impl_->row_variables.end()) {
    std::size_t per_row = 1;
    for (std::size_t i = 1; i < it->dims.size(); ++i) per_row *= impl_->dimensions[it->dims[i]].size;
    if (values.size() != per_row) {
      impl_->fail(name, "row has " + std::to_string(values.size()) + " values, expected " + std::to_string(per_row));
    }
  }
  write_rows(name, row, values);
}

void Hdf5Writer::write_rows(const std::string& name, std::size_t row, std::span<const double> values) {
  auto it = std::find_if(impl_->row_variables.begin(), impl_->row_variables.end(),
                         [&](const Impl::RowVariable& v) { return v.name == name; });
  if (it == impl_->row_variables.end()) {
    impl_->fail(name, "not a row variable (declare it with define_rows)");
  }
  Impl::Dimension& first = impl_->dimensions[it->dims[0]];
  std::size_t per_row = 1;
  for (std::size_t i = 1; i < it->dims.size(); ++i) per_row *= impl_->dimensions[it->dims[i]].size;
  if (values.empty() || values.size() % per_row != 0) {
    impl_->fail(name, "rows have " + std::to_string(values.size()) + " values, not a whole number of rows of " +
                          std::to_string(per_row));
  }
  const std::size_t n_rows = values.size() / per_row;
  if (!first.growing && row + n_rows > first.size) {
    impl_->fail(name, (n_rows == 1 ? "row " + std::to_string(row) + " is"
                                   : "rows " + std::to_string(row) + " to " + std::to_string(row + n_rows - 1) + " go") +
                          " beyond dimension '" + first.name + "' of size " + std::to_string(first.size));
  }
  Impl::check_finite(*impl_, name, values);
  impl_->guarded(name, "write a row", [&] {
    if (first.growing && row + n_rows > first.size) {
      // Grow the dimension: its placeholder scale and every row variable along it.
      first.size = row + n_rows;
      const hsize_t n = first.size;
      first.scale.extend(&n);
      for (Impl::RowVariable& v : impl_->row_variables) {
        if (v.dims[0] != it->dims[0]) continue;
        std::vector<hsize_t> shape;
        for (std::size_t d : v.dims) shape.push_back(impl_->dimensions[d].size);
        v.data.extend(shape.data());
      }
    }
    H5::DataSpace file_space = it->data.getSpace();
    std::vector<hsize_t> start(it->dims.size(), 0), count;
    start[0] = row;
    count.push_back(n_rows);
    for (std::size_t i = 1; i < it->dims.size(); ++i) {
      count.push_back(impl_->dimensions[it->dims[i]].size);
    }
    file_space.selectHyperslab(H5S_SELECT_SET, count.data(), start.data());
    const hsize_t n = values.size();
    const H5::DataSpace memory_space(1, &n);
    it->data.write(values.data(), H5::PredType::NATIVE_DOUBLE, memory_space, file_space);
  });
}

void Hdf5Writer::defer_rows_to_ranks(std::size_t granule) {
  if (granule == 0 || (granule & (granule - 1)) != 0) {
    impl_->fail("", "the row granule of a parallel write must be a power of two, got " + std::to_string(granule));
  }
  impl_->rank_granule = granule;
}

void Hdf5Writer::flush() {
  impl_->guarded("", "flush", [&] { impl_->file->flush(H5F_SCOPE_GLOBAL); });
}

void Hdf5Writer::set_attribute(const std::string& variable, const std::string& name,
                               std::string_view value) {
  impl_->check_attribute_name(variable, name);
  impl_->guarded(variable, "write an attribute", [&] {
    impl_->with_object(variable, [&](H5::H5Object& o) { Impl::write_text(o, name, value); });
  });
}

void Hdf5Writer::set_attribute(const std::string& variable, const std::string& name, double value) {
  set_attribute(variable, name, std::span<const double>(&value, 1));
}

void Hdf5Writer::set_attribute(const std::string& variable, const std::string& name,
                               std::span<const double> values) {
  impl_->check_attribute_name(variable, name);
  if (values.empty()) impl_->fail(variable, "attribute '" + name + "' has no values");
  Impl::check_finite(*impl_, variable.empty() ? name : variable, values);
  impl_->guarded(variable, "write an attribute", [&] {
    impl_->with_object(variable, [&](H5::H5Object& o) {
      Impl::write_numbers(o, name, H5::PredType::NATIVE_DOUBLE, values);
    });
  });
}

void Hdf5Writer::set_attribute(const std::string& variable, const std::string& name, int value) {
  impl_->check_attribute_name(variable, name);
  impl_->guarded(variable, "write an attribute", [&] {
    impl_->with_object(variable, [&](H5::H5Object& o) {
      Impl::write_numbers(o, name, H5::PredType::NATIVE_INT, std::span<const int>(&value, 1));
    });
  });
}

void Hdf5Writer::set_attribute(const std::string& variable, const std::string& name, std::span<const int> values) {
  impl_->check_attribute_name(variable, name);
  if (values.empty()) impl_->fail(variable, "attribute '" + name + "' has no values");
  impl_->guarded(variable, "write an attribute", [&] {
    impl_->with_object(variable, [&](H5::H5Object& o) { Impl::write_numbers(o, name, H5::PredType::NATIVE_INT, values); });
  });
}

bool hdf5_file_abandoned() { return g_abandoned.load(); }

void Hdf5Writer::commit() {
  // Each dataset is closed on its own first, so that a failure is seen (and the file marked
  // broken) before the file itself is closed; a failed close leaves the rest abandoned.
  impl_->guarded("", "close the file", [&] {
    while (!impl_->row_variables.empty()) {
      impl_->row_variables.back().data.close();
      impl_->row_variables.pop_back();
    }
    while (!impl_->dimensions.empty()) {
      impl_->dimensions.back().scale.close();
      impl_->dimensions.pop_back();
    }
    impl_->file->close();
  });
  impl_->file.reset();
  impl_->output.commit();
}

}  // namespace solstrata::io
