// What ecCodes costs per GRIB message (bench/README.md, "classify from GRIB
// (issue 14)"): the CPU time of a handle from the file, of each key the scan
// of isohypse (src/io/grib_index.cpp) or a notebook reads, of a second handle
// from the message's bytes and its values (the decode, src/io/grib_decode.cpp);
// then whether two threads decode two files' messages faster than one.
// Standalone, not part of the build:
//   g++ -O2 bench/grib_key_costs.cpp -o /tmp/grib_key_costs -leccodes -lpthread
//   /tmp/grib_key_costs A.grib2 B.grib2
#include <eccodes.h>

#include <chrono>
#include <cstdio>
#include <ctime>
#include <map>
#include <string>
#include <thread>
#include <vector>

namespace {

using Messages = std::vector<std::vector<unsigned char>>;

double thread_cpu() {
  timespec t;
  clock_gettime(CLOCK_THREAD_CPUTIME_ID, &t);
  return static_cast<double>(t.tv_sec) + 1e-9 * static_cast<double>(t.tv_nsec);
}

// Microseconds of thread CPU per message for each step; the first message
// (loading the definition files) is left out. Returns the messages' bytes.
Messages key_costs(const char* path) {
  const std::vector<std::string> longs = {"totalLength", "edition", "centre", "paramId", "level", "number",
                                          "dataDate", "dataTime", "endStep", "stepUnits", "bitsPerValue", "Ni",
                                          "Nj", "bitmapPresent"};
  const std::vector<std::string> strings = {"shortName", "units", "typeOfLevel", "dataType", "packingType",
                                            "gridType"};
  std::map<std::string, double> cost;
  Messages out;
  std::vector<double> values(1 << 20);
  FILE* f = std::fopen(path, "rb");
  int err = 0;
  for (int n = 0;; ++n) {
    double t = thread_cpu();
    codes_handle* h = codes_handle_new_from_file(nullptr, f, PRODUCT_GRIB, &err);
    cost["handle from the file"] += thread_cpu() - t;
    if (!h) break;
    for (const auto& k : longs) {
      long v = 0;
      t = thread_cpu();
      codes_get_long(h, k.c_str(), &v);
      cost["key " + k] += thread_cpu() - t;
    }
    for (const auto& k : strings) {
      char buf[256];
      std::size_t len = sizeof buf;
      t = thread_cpu();
      codes_get_string(h, k.c_str(), buf, &len);
      cost["key " + k] += thread_cpu() - t;
    }
    const void* bytes = nullptr;
    std::size_t length = 0;
    codes_get_message(h, &bytes, &length);
    out.emplace_back(static_cast<const unsigned char*>(bytes), static_cast<const unsigned char*>(bytes) + length);
    t = thread_cpu();
    codes_handle_delete(h);
    cost["handle deleted"] += thread_cpu() - t;
    t = thread_cpu();
    codes_handle* d = codes_handle_new_from_message(nullptr, out.back().data(), length);
    cost["decode: handle from the bytes"] += thread_cpu() - t;
    std::size_t nv = values.size();
    t = thread_cpu();
    codes_get_double_array(d, "values", values.data(), &nv);
    cost["decode: values"] += thread_cpu() - t;
    codes_handle_delete(d);
    if (n == 0) cost.clear();
  }
  std::fclose(f);
  const double n = static_cast<double>(out.size() - 1);
  for (const auto& [what, s] : cost) std::printf("  %-34s %8.1f us\n", what.c_str(), 1e6 * s / n);
  return out;
}

void decode_all(const Messages* messages) {
  std::vector<double> values(1 << 20);
  for (const auto& m : *messages) {
    codes_handle* h = codes_handle_new_from_message(nullptr, m.data(), m.size());
    std::size_t n = values.size();
    codes_get_double_array(h, "values", values.data(), &n);
    codes_handle_delete(h);
  }
}

double wall(const std::chrono::steady_clock::time_point& t0) {
  return std::chrono::duration<double>(std::chrono::steady_clock::now() - t0).count();
}

}  // namespace

int main(int argc, char** argv) {
  if (argc != 3) {
    std::fprintf(stderr, "usage: %s A.grib2 B.grib2\n", argv[0]);
    return 2;
  }
  std::printf("thread CPU per message of %s:\n", argv[1]);
  const Messages a = key_costs(argv[1]);
  std::printf("thread CPU per message of %s:\n", argv[2]);
  const Messages b = key_costs(argv[2]);
  auto t0 = std::chrono::steady_clock::now();
  decode_all(&a);
  decode_all(&b);
  const double one = wall(t0);
  t0 = std::chrono::steady_clock::now();
  std::thread x(decode_all, &a), y(decode_all, &b);
  x.join();
  y.join();
  std::printf("decoding %zu messages: one thread %.2f s, two threads %.2f s (wall)\n", a.size() + b.size(), one,
              wall(t0));
  return 0;
}
