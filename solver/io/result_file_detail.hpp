// Pieces shared by the writers of single runs, sweeps and time series (io/ internal).
#pragma once

#include <string>
#include <vector>

#include "experiment/experiment.hpp"
#include "experiment/run.hpp"
#include "io/hdf5_writer.hpp"
#include "io/result_fields.hpp"

namespace solstrata::io::detail {

/// netCDF's default fill value for doubles (NC_FILL_DOUBLE): readers show it as missing.
inline constexpr double kFill = kFillValue;

/// Provenance, conventions, the experiment text and the cautions as global attributes.
void write_global_attributes(Hdf5Writer& w, const experiment::Experiment& e, const experiment::RunResult& r);
/// The level, layer, band (and wavelength) dimensions of a result.
void add_result_dimensions(Hdf5Writer& w, const experiment::RunResult& r);
/// A field's extra text attributes (notes).
void set_field_attributes(Hdf5Writer& w, const Field& f);

/// The per-scenario numeric fields of checkpoint records (result_fields order), written as row
/// variables along a leading dimension ("scenario", "time") in blocks of rows (about 64 MB
/// buffered), so that memory stays bounded however many rows there are. Fields not chosen by
/// output.variables are in the record but not written.
class RecordRows {
 public:
  /// With `deferred`, the variables are declared but add() writes nothing: their rows are
  /// written by the ranks of an MPI run (io/parallel_rows.hpp).
  RecordRows(Hdf5Writer& w, const std::vector<Field>& fields, const std::string& leading_dimension,
             const std::vector<std::string>& chosen, bool deferred = false);
  /// Visits the record's numeric per-scenario fields in order: visit(field, offset in the record).
  template <class F>
  static void for_each_record_field(const std::vector<Field>& fields, F&& visit) {
    std::size_t offset = 0;
    for (const Field& f : fields) {
      if (!f.per_scenario || !f.texts.empty()) continue;
      visit(f, offset);
      offset += f.values.size();
    }
  }
  /// Values of these fields in one record (a record may hold more after them).
  [[nodiscard]] std::size_t record_values() const { return values_; }
  /// Offset of a field in the record (every per-scenario field, chosen or not). Throws when absent.
  [[nodiscard]] std::size_t offset_of(const std::string& name) const;
  /// Whether a per-scenario field of that name is in the record.
  [[nodiscard]] bool has(const std::string& name) const;
  /// Appends the next row: the record's values, or fill values when `record` is null.
  void add(const double* record);
  /// Writes what is buffered, then each written field's attributes: `coordinates` (with
  /// level_pressure for fields on levels), the field's notes, _FillValue and missing_value.
  void finish(const std::string& coordinates);

 private:
  struct Slot {
    const Field* f;
    std::size_t offset, size;
    bool keep;
    std::vector<double> buffer;
  };
  void flush();
  Hdf5Writer& w_;
  std::vector<Slot> slots_;
  std::size_t values_ = 0, block_ = 1, block_start_ = 0, rows_ = 0;
  bool deferred_ = false;
};

}  // namespace solstrata::io::detail
