// netCDF-4 compatible HDF5 output: the only place (with hdf5_reader) that uses HDF5.
//
// The file is an HDF5 file laid out the way netCDF-4 lays out its own, so that `ncdump`,
// netCDF-C, h5py and xarray open it as a dataset: every dimension is an HDF5 dimension scale
// (a coordinate variable, or a placeholder dataset marked as "not a netCDF variable"), every
// variable has its dimension scales attached, and attributes use the types netCDF-C writes
// (text as a scalar fixed-length NUL-terminated ASCII string, numbers as 1-D arrays).
// HDF5 stays out of this header (pimpl), so including it costs nothing.
#pragma once

#include <cstddef>
#include <filesystem>
#include <memory>
#include <span>
#include <string>
#include <string_view>
#include <vector>

#include "io/atomic_file.hpp"

namespace solstrata::io {

/// netCDF's default fill value for doubles (NC_FILL_DOUBLE, from memory: 9.9692099683868690e+36).
inline constexpr double kNetcdfFillDouble = 9.9692099683868690e+36;

/// The attributes every variable carries (CF conventions).
struct VariableAttributes {
  /// UDUNITS unit string, e.g. "W m-2", "hPa", "nm"; "1" for dimensionless. Required for numeric
  /// variables; may be empty for text variables.
  std::string units;
  /// Human-readable description, e.g. "downward diffuse flux at level". Required.
  std::string long_name;
  /// CF standard name where CF defines one, else empty (then not written).
  std::string standard_name;
};

/// Writes one netCDF-4 compatible HDF5 file. The file appears at its path only after commit()
/// (written under a temporary name, then renamed: see AtomicOutput); if the writer is destroyed
/// without commit(), for instance by an exception, the temporary is removed and nothing is left.
///
/// Names of dimensions and variables: a letter, then letters, digits or '_'. Each dimension is
/// declared once and before the variables that use it; a variable's dimensions are listed
/// slowest-varying first (C order; values[i0 * n1 + i1] for dims {d0, d1}). Every method throws
/// OutputError (naming the file and variable) on bad use or a failed write. Values must be
/// finite: NaN or infinity in a variable is an OutputError. Not thread-safe: use one writer from
/// one thread. Constructing a writer turns off HDF5's automatic printing of error stacks for the
/// process (the library never prints; errors arrive as OutputError).
///
/// A write the system refuses (disk full, file-size limit) throws OutputError with the system's
/// reason; the temporary is then removed, and the file is never touched by HDF5 again (HDF5
/// 1.10 crashes when such a file is closed): see hdf5_file_abandoned().
class Hdf5Writer {
 public:
  /// Starts a new file that will replace `path` on commit().
  explicit Hdf5Writer(const std::filesystem::path& path);
  ~Hdf5Writer();
  Hdf5Writer(Hdf5Writer&&) noexcept;
  Hdf5Writer& operator=(Hdf5Writer&&) noexcept;
  Hdf5Writer(const Hdf5Writer&) = delete;
  Hdf5Writer& operator=(const Hdf5Writer&) = delete;

  /// A dimension of `size` >= 1 points without coordinate values.
  void add_dimension(const std::string& name, std::size_t size);
  /// A dimension with a coordinate variable of the same name holding `values` (its size).
  void add_coordinate(const std::string& name, std::span<const double> values,
                      const VariableAttributes& attributes);
  /// A dimension with a text coordinate variable (netCDF string) holding `values`, e.g. labels.
  void add_coordinate(const std::string& name, std::span<const std::string> values,
                      const VariableAttributes& attributes);
  /// A dimension that starts with 0 points and grows as rows are written (netCDF "unlimited").
  void add_growing_dimension(const std::string& name);
  /// Size of a dimension (current size for a growing one).
  [[nodiscard]] std::size_t dimension_size(const std::string& name) const;

  /// A double variable over `dimensions` (empty for a scalar), written at once.
  void write(const std::string& name, const std::vector<std::string>& dimensions,
             std::span<const double> values, const VariableAttributes& attributes);
  /// A 32-bit integer variable (netCDF int).
  void write(const std::string& name, const std::vector<std::string>& dimensions,
             std::span<const int> values, const VariableAttributes& attributes);
  /// A text variable (netCDF string: HDF5 variable-length strings).
  void write(const std::string& name, const std::vector<std::string>& dimensions,
             std::span<const std::string> values, const VariableAttributes& attributes);

  /// Declares a double variable written row by row along its first dimension (fixed or growing)
  /// with write_row(); chunked one row per chunk. Rows not yet written read as the netCDF
  /// default fill value for doubles, 9.969209968386869e36 (or `fill`: the MPI skeleton matches
  /// variables that the serial file writes at once, whose HDF5 fill value is HDF5's default 0).
  void define_rows(const std::string& name, const std::vector<std::string>& dimensions,
                   const VariableAttributes& attributes, double fill = kNetcdfFillDouble);
  /// Writes row `row` (all values for one index of the first dimension, C order over the rest).
  /// A growing first dimension is extended to row + 1 when needed.
  void write_row(const std::string& name, std::size_t row, std::span<const double> values);
  /// Consecutive rows from `row` on: `values` holds a whole number of rows in C order.
  void write_rows(const std::string& name, std::size_t row, std::span<const double> values);
  /// Pushes everything written so far from HDF5's caches to the (temporary) file.
  void flush();
  /// For row variables defined from now on, every row will be written later by other writers
  /// (the ranks of an MPI run, io/parallel_rows.hpp), not by this one: no fill value is written
  /// when their storage is allocated (the fill value is still declared), and each chunk holds a
  /// power of two rows dividing `granule` (a power of two), so that no chunk straddles the row
  /// blocks of two ranks (blocks are multiples of `granule`).
  void defer_rows_to_ranks(std::size_t granule);

  /// A text attribute on a variable, or on the file when `variable` is empty (global).
  void set_attribute(const std::string& variable, const std::string& name, std::string_view value);
  void set_attribute(const std::string& variable, const std::string& name, const char* value) {
    set_attribute(variable, name, std::string_view(value));
  }
  /// A numeric attribute (netCDF double), one value or several.
  void set_attribute(const std::string& variable, const std::string& name, double value);
  void set_attribute(const std::string& variable, const std::string& name,
                     std::span<const double> values);
  /// An integer attribute (netCDF int), one value or several.
  void set_attribute(const std::string& variable, const std::string& name, int value);
  void set_attribute(const std::string& variable, const std::string& name, std::span<const int> values);

  /// Closes the file and moves it to its final path. The writer is unusable afterwards.
  /// A failed close (a write refused at the end) throws OutputError and removes the temporary.
  void commit();
  /// The final path.
  [[nodiscard]] const std::filesystem::path& path() const;
  /// The temporary path being written (for tests and diagnostics).
  [[nodiscard]] const std::filesystem::path& temp_path() const;

 private:
  struct Impl;
  std::unique_ptr<Impl> impl_;
};

/// True once a writer of this process met a refused write and abandoned its file without
/// closing it. HDF5 then cannot be shut down safely (its library shutdown at exit closes the
/// abandoned file and crashes, measured with HDF5 1.10.8): the program should flush its own
/// streams and end with std::_Exit instead of returning from main.
bool hdf5_file_abandoned();

}  // namespace solstrata::io
