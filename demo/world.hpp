// The invented world behind the demo files: 500 hPa heights as a sum of fixed
// spatial patterns times time coefficients, so that any grid is one matrix
// product away.
//
//   h(x, t) = clim_mean(x) + clim_annual(x) c1(t) + clim_semiannual(x) c2(t)
//           + trend(t) + taper(t) regime_anomaly[state(t)](x)
//           + drift_factor(lead) drift(x) + sum_k a_k(t) blob_k(x)
//
// Heights in metres; latitudes in degrees north, longitudes in degrees east
// (any representative: patterns use great-circle distances, so -40 and 320
// are the same place). The truth runs daily on the real (standard) calendar
// from kFirstDay to kLastDay whatever the size written, so a small world is a
// coarse, shorter view of the full one for the same seed. Model runs
// (forecasts, reforecasts) live on the noleap calendar; a model day maps to
// the real day with the same year-month-day.
#pragma once

#include <armadillo>
#include <cstdint>
#include <nlohmann/json.hpp>
#include <string>
#include <vector>

#include "isohypse/base/calendar.hpp"
#include "base/random.hpp"

namespace demo {

inline constexpr int kDefaultRegimes = 4;  // today's world
inline constexpr int kLeads = 46;  // lead days 0..45
inline const isohypse::Date kFirstDay{1991, 1, 1, isohypse::Calendar::Standard};
inline const isohypse::Date kLastDay{2026, 6, 30, isohypse::Calendar::Standard};

// One Gaussian centre: amplitude * exp(-d^2 / (2 radius^2)), d the
// great-circle distance in degrees.
struct Centre {
  double lat, lon, amplitude, radius;  // degrees N, degrees E (0..360), m, degrees
};

struct Pattern {
  std::string name;
  std::vector<Centre> centres;
  double value(double lat, double lon) const;  // metres
};

// Grid points in a file's storage order (latitude rows, longitude fastest).
struct Points {
  std::vector<double> lat, lon;
  static Points product(const std::vector<double>& lat_axis, const std::vector<double>& lon_axis);
  std::size_t size() const { return lat.size(); }
};

// first, first + step, ..., last (inclusive; exact multiples of step).
std::vector<double> axis(double first, double last, double step);

// Whether regimes are labelled on this day: November to March.
bool cold_season(const isohypse::Date& d);

// A model run's planted trajectory for one member, one column per lead.
struct Trajectory {
  std::vector<int> regime;               // planted regime per lead (all year, no -1)
  std::vector<isohypse::Date> valid;     // model (noleap) valid dates
  arma::mat coefs;                       // n_terms x kLeads
};

// The demo's two forecast systems, the same model (grid, members' drift,
// calendar, files): `skilful` members start from the truth and follow its
// regime up to a random divergence lead (forecasts/, reforecasts/);
// `no_skill` members diverge at lead 0 (forecasts_noskill/,
// reforecasts_noskill/): their regime is their own Markov chain from a state
// drawn from the chain's stationary distribution, their noise their own
// AR(1) from day 0.
enum class ModelSystem { skilful, no_skill };

// What is planted: 3, 4 or 5 regimes (3: the first three of the four; 5: the
// four and a block), or none (a noise-only world: the same climatology and
// red noise for the same seed, no regime term, every label -1); and an
// optional small-scale red noise (Gaussian centres of 3-4.5 degrees, about 6
// degrees apart) of the given mean point standard deviation over the sector,
// added to the large-scale noise, which stays the same for the same seed.
// The default spec is today's world, byte for byte.
struct WorldSpec {
  int regimes = kDefaultRegimes;  // 3, 4 or 5; ignored when noise_only
  bool noise_only = false;
  double small_noise_std = 0.0;   // m; 0 = none
  // Throws isohypse::InputError for another count or a negative or non-finite std.
  void validate() const;
  int planted() const { return noise_only ? 0 : regimes; }
};

class World {
public:
  explicit World(std::uint64_t seed, const WorldSpec& spec = {});

  std::uint64_t seed() const { return seed_; }
  const WorldSpec& spec() const { return spec_; }
  // Regimes planted: 0 in a noise-only world.
  int n_regimes() const { return static_cast<int>(regimes_.size()); }
  std::size_t n_terms() const;
  // The spatial terms at the points: n_points x n_terms, metres per unit coefficient.
  arma::mat terms(const Points& points) const;

  // The regimes' Gaussian shapes (names and centres).
  const std::vector<Pattern>& regimes() const { return regimes_; }
  // Regime r's anomaly pattern (m): its shape minus the shapes' mean weighted
  // by the chain's stationary distribution, so that the regimes add nothing
  // to the climatology and an anomaly method sees exactly these patterns.
  double regime_anomaly(int r, double lat, double lon) const;
  const Pattern& drift() const { return drift_; }

  // Truth on a real (standard-calendar) day in [kFirstDay, kLastDay]; the
  // regime is -1 every day in a noise-only world.
  int truth_regime(const isohypse::Date& real) const;
  arma::vec truth_coefs(const isohypse::Date& real) const;
  // Labelled regime: the truth's state in the cold season, -1 outside it.
  int label(const isohypse::Date& real) const;

  // A model member of `system` initialised on `init` (a real day that also
  // exists on the noleap calendar). Members are independent random streams
  // keyed by (seed, system, init, member), so any subset can be generated
  // alone and the no-skill system moves nothing of the skilful one.
  Trajectory member(const isohypse::Date& init, int member, ModelSystem system = ModelSystem::skilful) const;

  // Everything planted, for truth.json: patterns, Markov matrix, drift,
  // noise, climatology.
  nlohmann::json describe() const;

private:
  std::size_t day_index(const isohypse::Date& real) const;
  // The coefficient column for a real day, given its regime, drift factor and noise.
  void fill_coefs(double* column, const isohypse::Date& real, int regime, double drift_factor,
                  const double* noise) const;

  int next_state(int from, double u) const;
  // The state at which the stationary distribution's cumulative sum passes u (-1 without regimes).
  int stationary_state(double u) const;
  // The member's columns: `start` at lead 0, the truth's regime while lead <
  // divergence, then its own chain; its noise the truth's damped toward its
  // own when truth_noise, else its own alone.
  Trajectory trajectory(const isohypse::Date& init, isohypse::detail::Rng& rng, double divergence, int start,
                        bool truth_noise) const;
  nlohmann::json members_json(ModelSystem system) const;  // how members are made, for describe()
  nlohmann::json noise_json() const;        // the large-scale noise, for describe()
  nlohmann::json small_noise_json() const;  // the small-scale noise, for describe()
  void plant_noise(std::uint64_t stream, int lattice_points, double radius_min, double radius_max, double std);

  std::uint64_t seed_;
  WorldSpec spec_;
  std::vector<Pattern> regimes_;
  std::vector<std::vector<double>> markov_;  // rows: from, columns: to
  std::vector<double> stationary_;  // of the Markov chain
  Pattern drift_;
  std::vector<Centre> blobs_;        // unit-amplitude noise centres (amplitude field unused)
  std::vector<double> blob_scale_;   // metres per unit noise coefficient, per centre
  std::size_t large_blobs_ = 0;      // the first centres: the large-scale noise; the rest small-scale
  std::vector<int> states_;    // truth chain per day (-1 in a noise-only world)
  arma::mat noise_;            // n_blobs x n_days, unit-variance AR(1) per row
};

// The spatial terms on one grid, with the columns that vanish there dropped
// (southern noise centres on a northern grid), so heights cost one product.
class Surface {
public:
  Surface(const World& world, const Points& points);
  std::size_t n_points() const { return terms_.n_rows; }
  // n_points x n_cols heights in metres for coefficient columns (n_terms x
  // n_cols); the rare tails beyond 4,850 and 5,950 m are squashed smoothly
  // so that every height lies within 4,730..6,070 m.
  arma::mat heights(const arma::mat& coefs) const;

private:
  arma::mat terms_;
  arma::uvec keep_;
};

}  // namespace demo
