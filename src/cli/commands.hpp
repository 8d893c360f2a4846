// The sub-commands of the isohypse front end. Each add_* registers its flags
// on the app and a callback that calls the library; main() owns exit codes.
#pragma once

#include <CLI/CLI.hpp>

namespace isohypse::cli {

void add_inspect(CLI::App& app);
void add_derive(CLI::App& app);
void add_calibrate(CLI::App& app);
void add_classify(CLI::App& app);
void add_verify(CLI::App& app);
void add_serve(CLI::App& app);

}  // namespace isohypse::cli
