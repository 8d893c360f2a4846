// Internal: a move-only RAII owner of one ecCodes message handle, and the one
// checking wrapper every ecCodes call goes through. Not part of the public
// headers, so that eccodes.h stays out of them.
//
// Thread safety (ecCodes 2.28 as Debian builds it; DEVELOPERS.md, "Threads,
// memory, C libraries"): eccodes_config.h has GRIB_OMP_THREADS 1 (and
// libeccodes links libgomp), so the shared default context, the loading and
// parsing of the definition files and the handle bookkeeping take OpenMP
// locks. A handle itself is not protected: one handle belongs to one thread.
// isohypse never shares a handle, never uses codes_index (not safe even in
// threaded builds: ecmwf/eccodes users report crashes in codes_index_select),
// and creates decoding handles from bytes it read itself (no shared FILE*).
#pragma once

#include <cstddef>
#include <cstdint>
#include <string>
#include <string_view>
#include <vector>

struct grib_handle;  // ecCodes' codes_handle

namespace isohypse::grib {

// Throws DataError "WHERE: CALL: ecCodes' message" unless err is 0.
void check(int err, std::string_view call, const std::string& where);

// ecCodes prints its own errors on stderr; isohypse carries them in its
// exceptions instead, so the library's logging is silenced once per process.
void quiet_eccodes();

class Handle {
public:
  Handle() = default;
  // Takes ownership of h (may be null: then valid() is false).
  Handle(grib_handle* h, std::string where) : h_(h), where_(std::move(where)) {}
  // A handle on bytes the caller keeps alive and unchanged while the
  // handle lives (ecCodes does not copy them).
  static Handle from_message(const void* bytes, std::size_t length, std::string where);
  Handle(Handle&& other) noexcept;
  Handle& operator=(Handle&& other) noexcept;
  Handle(const Handle&) = delete;
  Handle& operator=(const Handle&) = delete;
  ~Handle();

  bool valid() const { return h_ != nullptr; }
  grib_handle* get() const { return h_; }
  // "FILE: message N at byte B": every error names it.
  const std::string& where() const { return where_; }

  bool defined(const char* key) const;
  long get_long(const char* key) const;
  double get_double(const char* key) const;
  std::string get_string(const char* key) const;
  std::vector<double> get_doubles(const char* key) const;
  // Reuses `out` (resized to the key's size).
  void get_doubles(const char* key, std::vector<double>& out) const;
  std::vector<long> get_longs(const char* key) const;

private:
  grib_handle* h_ = nullptr;
  std::string where_;
};

}  // namespace isohypse::grib
