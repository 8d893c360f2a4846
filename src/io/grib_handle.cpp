#include "io/grib_handle.hpp"

#include <eccodes.h>

#include <mutex>
#include <utility>

#include "isohypse/base/error.hpp"

namespace isohypse::grib {

void check(int err, std::string_view call, const std::string& where) {
  if (err == 0) return;
  throw DataError(where + ": " + std::string(call) + ": " + codes_get_error_message(err));
}

void quiet_eccodes() {
  static std::once_flag once;
  std::call_once(once, [] {
    codes_context_set_logging_proc(codes_context_get_default(), [](const codes_context*, int, const char*) {});
  });
}

Handle Handle::from_message(const void* bytes, std::size_t length, std::string where) {
  quiet_eccodes();
  codes_handle* h = codes_handle_new_from_message(nullptr, bytes, length);
  if (!h) throw DataError(where + ": ecCodes cannot decode the message (damaged or not GRIB)");
  return Handle(h, std::move(where));
}

Handle::Handle(Handle&& other) noexcept
    : h_(std::exchange(other.h_, nullptr)), where_(std::move(other.where_)) {}

Handle& Handle::operator=(Handle&& other) noexcept {
  if (this != &other) {
    if (h_) codes_handle_delete(h_);
    h_ = std::exchange(other.h_, nullptr);
    where_ = std::move(other.where_);
  }
  return *this;
}

Handle::~Handle() {
  if (h_) codes_handle_delete(h_);
}

bool Handle::defined(const char* key) const {
  return codes_is_defined(h_, key) != 0;
}

long Handle::get_long(const char* key) const {
  long v = 0;
  check(codes_get_long(h_, key, &v), std::string("key ") + key, where_);
  return v;
}

double Handle::get_double(const char* key) const {
  double v = 0;
  check(codes_get_double(h_, key, &v), std::string("key ") + key, where_);
  return v;
}

std::string Handle::get_string(const char* key) const {
  std::size_t len = 0;
  check(codes_get_length(h_, key, &len), std::string("key ") + key, where_);
  std::string s(len + 1, '\0');
  len = s.size();
  check(codes_get_string(h_, key, s.data(), &len), std::string("key ") + key, where_);
  s.resize(std::char_traits<char>::length(s.c_str()));
  return s;
}

void Handle::get_doubles(const char* key, std::vector<double>& out) const {
  std::size_t n = 0;
  check(codes_get_size(h_, key, &n), std::string("key ") + key, where_);
  out.resize(n);
  check(codes_get_double_array(h_, key, out.data(), &n), std::string("key ") + key, where_);
  out.resize(n);
}

std::vector<double> Handle::get_doubles(const char* key) const {
  std::vector<double> out;
  get_doubles(key, out);
  return out;
}

std::vector<long> Handle::get_longs(const char* key) const {
  std::size_t n = 0;
  check(codes_get_size(h_, key, &n), std::string("key ") + key, where_);
  std::vector<long> out(n);
  check(codes_get_long_array(h_, key, out.data(), &n), std::string("key ") + key, where_);
  out.resize(n);
  return out;
}

}  // namespace isohypse::grib
