// Internal: a move-only RAII handle on a netCDF-C file, and the one checking
// wrapper every netCDF call goes through. Not part of the public headers, so
// that netcdf.h stays out of them. netCDF-C is not thread-safe: use a File
// from one thread at a time, and open files from one thread.
#pragma once

#include <netcdf.h>

#include <cstddef>
#include <optional>
#include <string>
#include <string_view>
#include <vector>

namespace isohypse::nc {

// Throws DataError (InputError for a missing file) with the call, the file,
// the object and netCDF's own message. Does nothing on NC_NOERR.
void check(int status, std::string_view call, const std::string& path, std::string_view what = {});

struct Dim {
  int id = -1;
  std::string name;
  std::size_t length = 0;
  bool unlimited = false;
};

struct Var {
  int id = -1;
  std::string name;
  nc_type type = NC_NAT;
  std::vector<int> dims;  // dimension ids, slowest first
};

class File {
public:
  // Opens read-only. Missing file -> InputError; not netCDF/HDF5, truncated or
  // unreadable -> DataError; both name the path.
  static File open(const std::string& path);
  // Creates (clobbering) a NetCDF-4 file (HDF5 underneath) or, with
  // classic=true, a NetCDF-3 classic file, or with offset64=true, 64-bit offset.
  static File create(const std::string& path, bool classic = false, bool offset64 = false);

  File(File&& other) noexcept;
  File& operator=(File&& other) noexcept;
  File(const File&) = delete;
  File& operator=(const File&) = delete;
  ~File();

  int id() const { return ncid_; }
  const std::string& path() const { return path_; }
  // Closes and checks the close (flush errors surface here).
  void close();

  // "NetCDF-3 classic", "NetCDF-3 64-bit offset", "NetCDF-3 64-bit data",
  // "NetCDF-4", "NetCDF-4 classic model".
  std::string format_name() const;

  std::vector<Dim> dims() const;
  Dim dim(int dimid) const;
  std::optional<Dim> find_dim(const std::string& name) const;
  std::vector<Var> vars() const;
  Var var(int varid) const;
  std::optional<Var> find_var(const std::string& name) const;
  // Variables whose only dimension is `dim_id` with that name (coordinates).
  std::optional<Var> coordinate_var(const Dim& d) const;

  bool has_att(int varid, const std::string& name) const;
  std::optional<std::string> text_att(int varid, const std::string& name) const;
  // Numeric attribute as doubles (type-converted); nullopt if absent or text.
  std::optional<std::vector<double>> num_att(int varid, const std::string& name) const;
  std::vector<std::string> att_names(int varid) const;

  // Whole variable, type-converted to double (no unpacking).
  std::vector<double> read_all(int varid) const;
  // A hyperslab (start/count per dimension) into `out` (resized).
  void read(int varid, const std::vector<std::size_t>& start, const std::vector<std::size_t>& count,
            std::vector<double>& out) const;
  void read(int varid, const std::vector<std::size_t>& start, const std::vector<std::size_t>& count,
            std::vector<float>& out) const;
  // The same into memory the caller sized (product of count floats).
  void read(int varid, const std::vector<std::size_t>& start, const std::vector<std::size_t>& count,
            float* out) const;

  // Writing (define mode until end_define()).
  int def_dim(const std::string& name, std::size_t length);  // 0 = unlimited
  int def_var(const std::string& name, nc_type type, const std::vector<int>& dimids);
  void deflate(int varid, int level);
  void put_att(int varid, const std::string& name, const std::string& text);
  void put_att(int varid, const std::string& name, nc_type type, const std::vector<double>& values);
  void end_define();
  void write(int varid, const std::vector<std::size_t>& start, const std::vector<std::size_t>& count,
             const double* data);
  void write(int varid, const std::vector<std::size_t>& start, const std::vector<std::size_t>& count,
             const float* data);
  void write(int varid, const std::vector<std::size_t>& start, const std::vector<std::size_t>& count,
             const short* data);
  void write(int varid, const std::vector<std::size_t>& start, const std::vector<std::size_t>& count,
             const int* data);
  void write_all(int varid, const std::vector<double>& data);
  void write_text(int varid, const std::vector<std::size_t>& start, const std::vector<std::size_t>& count,
                  const char* data);

private:
  File(int ncid, std::string path) : ncid_(ncid), path_(std::move(path)) {}
  std::string var_label(int varid) const;
  void check_classic_size() const;
  int ncid_ = -1;
  std::string path_;
};

}  // namespace isohypse::nc
