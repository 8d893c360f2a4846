// What each size of the demo world writes, and the run that writes it.
#pragma once

#include <cstdint>
#include <iosfwd>
#include <string>

#include "world.hpp"

namespace demo {

struct Options {
  std::string out;             // folder, created if missing
  std::string size = "full";   // full, small, bench or tiny
  std::uint64_t seed = 8;      // picked so that the demo season 2025-26 visits all four regimes evenly
  int processes = 1;           // files written in parallel; the output does not depend on it
  WorldSpec world;             // what is planted (default: today's four regimes)
  double step = 0.0;           // reanalysis grid step in degrees; 0 = the size's
  int forecasts = 0;           // daily initialisations from 1 December 2025; 0 = the size's (90 full, 20 small)
};

// Writes the world under options.out (reanalysis/, analysis/, forecasts/,
// reforecasts/, the no-skill system's forecasts_noskill/ and
// reforecasts_noskill/, truth/; bench writes reanalysis/ only, tiny reanalysis/ and
// truth/ without the member tables) and prints one line per set, then the
// total, to `log`. Throws isohypse::InputError for an unknown size, a step
// that does not divide 30 degrees, forecasts asked of a size without them
// (bench, tiny), a WorldSpec that fails validate() or an
// unwritable folder.
void generate(const Options& options, std::ostream& log);

}  // namespace demo
