// isohypse: circulation-regime guidance from 500 hPa heights.
// The front end only parses flags, calls the library, prints and maps errors
// to exit codes: 0 ok, 1 usage, 2 bad input, 3 bad data, 4 numerical failure.
#include <spdlog/spdlog.h>

#include <iostream>

#include "base/allocator.hpp"
#include "cli/commands.hpp"
#include "isohypse/base/error.hpp"
#include "isohypse/base/vocabulary.hpp"

int main(int argc, char** argv) {
  isohypse::detail::keep_freed_memory();
  CLI::App app{
      "isohypse " ISOHYPSE_VERSION
      ": circulation-regime guidance from 500 hPa heights.\n" +
      std::string(isohypse::kCaution)};
  app.require_subcommand(1);
  app.set_version_flag("--version", "isohypse " ISOHYPSE_VERSION);
  std::string log_level = "info";
  app.add_option("--log-level", log_level, "trace, debug, info, warn, error or off")
      ->check(CLI::IsMember({"trace", "debug", "info", "warn", "error", "off"}));
  app.parse_complete_callback([&] { spdlog::set_level(spdlog::level::from_str(log_level)); });
  spdlog::set_pattern("%^%l%$: %v");

  using namespace isohypse;
  cli::add_inspect(app);
  cli::add_derive(app);
  cli::add_calibrate(app);
  cli::add_classify(app);
  cli::add_verify(app);
  cli::add_serve(app);

  try {
    app.parse(argc, argv);
  } catch (const CLI::ParseError& e) {
    // Help and version exit 0; every usage error exits 1 (CLI11's own codes vary).
    return app.exit(e) == 0 ? 0 : 1;
  } catch (const InputError& e) {
    std::cerr << "isohypse: error: " << e.what() << "\n";
    return 2;
  } catch (const DataError& e) {
    std::cerr << "isohypse: error: " << e.what() << "\n";
    return 3;
  } catch (const NumericalError& e) {
    std::cerr << "isohypse: error: " << e.what() << "\n";
    return 4;
  } catch (const InternalError& e) {
    std::cerr << "isohypse: internal error (please report it): " << e.what() << "\n";
    return 5;
  } catch (const std::exception& e) {
    std::cerr << "isohypse: internal error: " << e.what() << "\n";
    return 5;
  }
  return 0;
}
