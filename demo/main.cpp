// isohypse-demo-world: writes the invented demo world (see demo/README.md).
// Parses flags, runs demo::generate, maps errors to exit codes:
// 0 ok, 1 usage, 2 bad input, 3 bad data, 5 internal error.
#include <CLI/CLI.hpp>

#include <malloc.h>

#include <iostream>

#include "generate.hpp"
#include "processes.hpp"
#include "isohypse/base/error.hpp"

int main(int argc, char** argv) {
  CLI::App app{"isohypse-demo-world: writes an invented world of 500 hPa heights with planted circulation regimes "
               "(four by default; reanalysis, analysis, forecasts, reforecasts, the forecasts and reforecasts of a "
               "system without skill, and the planted truth)."};
  demo::Options options;
  app.add_option("--out", options.out, "Folder to write into (created if missing); files already there are replaced")
      ->required();
  app.add_option("--size", options.size,
                 "full: the README demo (30 reanalysis years at 2.5 degrees, 90 forecasts of 8 members, "
                 "20 years of reforecasts, and a system without skill: 7 forecasts, 10 years of reforecasts); "
                 "small: for the test suite (8 years at 5 degrees, 20 forecasts of 4 members, 6 years of "
                 "reforecasts; without skill the last 4 forecasts and the same reforecasts); bench: only the "
                 "reanalysis, 1991-2020 at 1 degree over the sector, for the benchmark; tiny: the reanalysis "
                 "2011-2020 at 5 degrees over the sector and the truth (labels, patterns, truth.json), for tests "
                 "of the choice of k")
      ->check(CLI::IsMember({"full", "small", "bench", "tiny"}))
      ->capture_default_str();
  app.add_option("--step", options.step,
                 "Reanalysis grid step in degrees, a divisor of 30 (default: the size's)");
  app.add_option("--forecasts", options.forecasts,
                 "Daily forecast initialisations from 2025-12-01 (default: the size's, 90 full and 20 small); "
                 "the test suite's daily season uses more than 20 of the small world's")
      ->check(CLI::Range(1, 120));
  app.add_option("--regimes", options.world.regimes, "Planted regimes: 3 (the first three of the four), 4, or 5 "
                 "(the four and a block 70N 165W)")
      ->check(CLI::IsMember({3, 4, 5}))
      ->capture_default_str();
  app.add_flag("--noise-only", options.world.noise_only,
               "Plant no regime: the same climatology and red noise, every planted label -1");
  app.add_option("--small-noise", options.world.small_noise_std,
                 "Add small-scale red noise (centres 3-4.5 degrees wide) of this mean point standard deviation over "
                 "the sector, in m (default 0: none)")
      ->check(CLI::NonNegativeNumber);
  app.add_option("--seed", options.seed, "Random seed: the same seed gives the same world, byte for byte in the data")
      ->capture_default_str();
  options.processes = demo::default_processes();
  app.add_option("--jobs", options.processes,
                 "Processes writing files in parallel (default: the number of cores, at most 4); "
                 "the files do not depend on it")
      ->check(CLI::Range(1, 64))
      ->capture_default_str();
  try {
    app.parse(argc, argv);
  } catch (const CLI::ParseError& e) {
    return app.exit(e) == 0 ? 0 : 1;  // --help is a ParseError too
  }

  // Hundreds of files each allocate and free megabytes (our buffers, HDF5's
  // chunks, zlib's state); glibc would hand them back to the kernel and fault
  // them in again every time, doubling the run time. Keep them.
  mallopt(M_MMAP_THRESHOLD, 32 << 20);
  mallopt(M_TRIM_THRESHOLD, 512 << 20);

  try {
    demo::generate(options, std::cout);
  } catch (const isohypse::InputError& e) {
    std::cerr << "isohypse-demo-world: error: " << e.what() << "\n";
    return 2;
  } catch (const isohypse::DataError& e) {
    std::cerr << "isohypse-demo-world: error: " << e.what() << "\n";
    return 3;
  } catch (const std::exception& e) {
    std::cerr << "isohypse-demo-world: internal error: " << e.what() << "\n";
    return 5;
  }
  return 0;
}
