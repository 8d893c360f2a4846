#include "world.hpp"

#include <algorithm>
#include <cmath>
#include <numbers>

#include "isohypse/base/error.hpp"
#include "base/random.hpp"

namespace demo {

using isohypse::Calendar;
using isohypse::Date;
using isohypse::detail::derive_seed;
using isohypse::detail::Rng;

namespace {

constexpr double kDeg = std::numbers::pi / 180.0;

// The planted regimes' shapes over the sector 20-80N, 170E-40W. The first
// four are today's world, with anomaly patterns (shape minus the stationary
// mean of the shapes) peaking at 185, 175, 165 and 160 m; the fifth, a block
// over Alaska with a trough to its south-east, is distinct from all four
// (pattern correlations -0.35..-0.12) and peaks at about 177 m.
std::vector<Pattern> regime_shapes(int n) {
  std::vector<Pattern> all = {
      {"ridge 55N 140W", {{55, 220, 240, 13}, {32, 242, -78, 10}}},
      {"trough 45N 170W", {{45, 190, -197, 12}, {60, 290, 90, 12}}},
      {"dipole 67N/42N 95W", {{67, 265, 275, 11}, {42, 268, -210, 10}}},
      {"wave train 34N 160W to 38N 68W", {{34, 200, 116, 9}, {48, 248, -166, 9}, {38, 292, 111, 9}}},
      {"block 70N 165W", {{70, 195, 250, 12}, {47, 215, -120, 11}}},
  };
  all.resize(static_cast<std::size_t>(n));
  return all;
}

// Markov chains of the planted regimes (rows: from, columns: to). Four
// (today's): residence times 1/(1-p_ii) of 8.3, 7.1, 10 and 6.7 days; three
// and five keep those self-transitions (the block's: 0.88).
std::vector<std::vector<double>> markov_matrix(int n) {
  if (n == 3) return {{0.88, 0.06, 0.06}, {0.07, 0.86, 0.07}, {0.05, 0.05, 0.90}};
  if (n == 5)
    return {{0.88, 0.03, 0.03, 0.03, 0.03},
            {0.04, 0.86, 0.03, 0.04, 0.03},
            {0.03, 0.03, 0.90, 0.02, 0.02},
            {0.04, 0.04, 0.03, 0.85, 0.04},
            {0.03, 0.03, 0.03, 0.03, 0.88}};
  if (n == 4)
    return {{0.88, 0.04, 0.05, 0.03}, {0.05, 0.86, 0.04, 0.05}, {0.03, 0.04, 0.90, 0.03}, {0.05, 0.06, 0.04, 0.85}};
  return {};
}

// Red noise: a field of Gaussian centres on a jittered Fibonacci lattice,
// each centre's weight an AR(1) series.
constexpr int kLatticePoints = 220;        // over the sphere, ~14 degrees apart
constexpr double kBlobMinAbsLat = 12.0;    // a quiet tropics
constexpr double kBlobRadiusMin = 6.0, kBlobRadiusMax = 9.0;
// Optional small-scale noise: centres ~6.4 degrees apart, 3-4.5 degrees wide.
constexpr int kSmallLatticePoints = 1000;
constexpr double kSmallRadiusMin = 3.0, kSmallRadiusMax = 4.5;
constexpr double kNoiseStd = 77.0;         // mean point standard deviation over the sector, m
constexpr double kNoiseLag1 = 0.75;
constexpr double kSummerCalm = 0.4;        // noise is this much weaker at the height of summer

// Model runs.
constexpr double kDivergenceMean = 10.0;   // days, exponential
constexpr double kNoiseMemory = 5.0;       // days: e-folding of the truth's share of a member's noise
constexpr double kDriftEfold = 8.0;        // days

// Climatology and trend.
constexpr double kSummerPeak = 0.56;       // fraction of the year (late July)
constexpr double kSemiPhase = 0.30;        // semi-annual maxima in late April and October
constexpr double kTrendPerYear = 0.4;      // m per year (4 m per decade)
constexpr int kTrendYear0 = 2005;
constexpr double kOffSeasonTaper = 0.2;    // regime amplitude from May to September

// Heights beyond these are squashed (tanh) to within kSquashWidth more:
// 4,730..6,070 m at most.
constexpr double kSquashLow = 4850.0, kSquashHigh = 5950.0, kSquashWidth = 120.0;

// Random stream identifiers (derive_seed).
enum Stream : std::uint64_t {
  kBlobStream = 1, kChainStream = 2, kNoiseStream = 3, kMemberStream = 4, kSmallBlobStream = 5, kSmallNoiseStream = 6,
  kNoSkillMemberStream = 7
};

double great_circle_deg(double lat1, double lon1, double lat2, double lon2) {
  double c = std::sin(lat1 * kDeg) * std::sin(lat2 * kDeg) +
             std::cos(lat1 * kDeg) * std::cos(lat2 * kDeg) * std::cos((lon1 - lon2) * kDeg);
  return std::acos(std::clamp(c, -1.0, 1.0)) / kDeg;
}

// 0 below 0, 1 above 1, a half cosine between.
double smooth_step(double x) { return 0.5 * (1.0 - std::cos(std::numbers::pi * std::clamp(x, 0.0, 1.0))); }

// Weight of the noise by latitude: 0.2 equatorward of 28 degrees, 1 from 55
// to 70, 0.7 at the pole: day-to-day variability is a high-latitude affair,
// and the warm subtropics then stay below about 6 km.
double noise_envelope(double lat) {
  double a = std::abs(lat);
  return (0.2 + 0.8 * smooth_step((a - 28.0) / 27.0)) * (1.0 - 0.3 * smooth_step((a - 70.0) / 20.0));
}

double gaussian(const Centre& c, double lat, double lon) {
  double d = great_circle_deg(c.lat, c.lon, lat, lon) / c.radius;
  return c.amplitude * std::exp(-0.5 * d * d);
}

// 0 equatorward of 20 degrees, 1 poleward of 75, smooth between.
double polar_fraction(double lat) { return smooth_step((std::abs(lat) - 20.0) / 55.0); }

// Stationary waves: wavenumbers 2 and 3 in the north, their ridges away from
// the planted ridge's centre (which would otherwise stack to unreal
// heights), a weak wavenumber 1 in the south.
double stationary_waves(double lat, double lon) {
  double env = std::exp(-std::pow((std::abs(lat) - 50.0) / 18.0, 2));
  if (lat >= 0)
    return env * (50.0 * std::cos(2.0 * (lon - 250.0) * kDeg) + 25.0 * std::cos(3.0 * (lon - 270.0) * kDeg));
  return env * 25.0 * std::cos((lon - 100.0) * kDeg);
}

// Zonal means: winter 5845 m (subtropics) to 5230 m (pole), summer 5885 to
// 5550 m; written as an annual mean and a half range.
double clim_mean(double lat, double lon) {
  double f = polar_fraction(lat);
  double waves = stationary_waves(lat, lon);
  return 5865.0 - 475.0 * f + (lat >= 0 ? 0.7 : 1.0) * waves;
}
double clim_annual(double lat, double lon) {
  double f = polar_fraction(lat);
  // The half range changes sign across the equator (opposite seasons);
  // northern waves are 40% weaker in summer.
  double waves = lat >= 0 ? -0.3 * stationary_waves(lat, lon) : 0.0;
  return std::tanh(lat / 8.0) * (20.0 + 140.0 * f) + waves;
}
double clim_semiannual(double lat, double) { return 15.0 * polar_fraction(lat); }

double years_since_2000(const Date& real) {
  static const Date y2000{2000, 1, 1, Calendar::Standard};
  return static_cast<double>(isohypse::days_between(y2000, real)) / 365.2425;
}

// Regime amplitude: 1 from November to March, 0.2 from May to September,
// linear ramps through April and October.
double regime_taper(const Date& d) {
  if (cold_season(d)) return 1.0;
  int n = isohypse::days_in_month(d.year, d.month, d.calendar);
  double x = static_cast<double>(d.day - 1) / (n - 1);
  if (d.month == 4) return 1.0 - (1.0 - kOffSeasonTaper) * x;
  if (d.month == 10) return kOffSeasonTaper + (1.0 - kOffSeasonTaper) * x;
  return kOffSeasonTaper;
}

// The chain's stationary distribution (power iteration; the chain is regular).
std::vector<double> stationary_distribution(const std::vector<std::vector<double>>& markov) {
  const std::size_t n = markov.size();
  std::vector<double> pi(n, 1.0 / static_cast<double>(n)), next(n);
  for (int it = 0; it < 2000; ++it) {
    std::fill(next.begin(), next.end(), 0.0);
    for (std::size_t i = 0; i < n; ++i)
      for (std::size_t j = 0; j < n; ++j) next[j] += pi[i] * markov[i][j];
    pi.swap(next);
  }
  return pi;
}

// Term layout of a coefficient column: the fixed terms, then one per regime,
// the drift, one per noise centre.
enum Term : std::size_t { kMean, kAnnual, kSemi, kTrend, kRegime0 };

}  // namespace

double Pattern::value(double lat, double lon) const {
  double v = 0.0;
  for (const auto& c : centres) v += gaussian(c, lat, lon);
  return v;
}

Points Points::product(const std::vector<double>& lat_axis, const std::vector<double>& lon_axis) {
  Points p;
  for (double la : lat_axis)
    for (double lo : lon_axis) {
      p.lat.push_back(la);
      p.lon.push_back(lo);
    }
  return p;
}

std::vector<double> axis(double first, double last, double step) {
  long n = std::lround(std::abs(last - first) / step) + 1;
  double s = last >= first ? step : -step;
  std::vector<double> v(static_cast<std::size_t>(n));
  for (long i = 0; i < n; ++i) v[static_cast<std::size_t>(i)] = first + s * static_cast<double>(i);
  return v;
}

bool cold_season(const Date& d) { return d.month >= 11 || d.month <= 3; }

void WorldSpec::validate() const {
  if (!noise_only && (regimes < 3 || regimes > 5))
    throw isohypse::InputError("--regimes: expected 3, 4 or 5 planted regimes, found " + std::to_string(regimes));
  if (!std::isfinite(small_noise_std) || small_noise_std < 0.0)
    throw isohypse::InputError("--small-noise: expected a standard deviation >= 0 m, found " +
                               std::to_string(small_noise_std));
}

World::World(std::uint64_t seed, const WorldSpec& spec) : seed_(seed), spec_(spec) {
  spec_.validate();
  regimes_ = regime_shapes(spec_.planted());
  markov_ = markov_matrix(spec_.planted());
  stationary_ = stationary_distribution(markov_);
  // Model drift: most of the ridge's main centre, slightly displaced, so
  // uncorrected long leads lean toward regime 0 (toward no regime when none is planted).
  drift_ = {"drift toward ridge 55N 140W", {{57, 215, 90, 14}}};

  const std::size_t n_days = static_cast<std::size_t>(isohypse::days_between(kFirstDay, kLastDay)) + 1;
  states_.assign(n_days, -1);
  if (!regimes_.empty()) {
    Rng chain_rng(derive_seed(seed, {kChainStream}));
    states_[0] = static_cast<int>(chain_rng.below(regimes_.size()));
    for (std::size_t j = 1; j < n_days; ++j) states_[j] = next_state(states_[j - 1], chain_rng.uniform());
  }
  noise_.set_size(0, n_days);
  plant_noise(kBlobStream, kLatticePoints, kBlobRadiusMin, kBlobRadiusMax, kNoiseStd);
  large_blobs_ = blobs_.size();
  if (spec_.small_noise_std > 0.0)
    plant_noise(kSmallBlobStream, kSmallLatticePoints, kSmallRadiusMin, kSmallRadiusMax, spec_.small_noise_std);
}

// Appends noise centres on a jittered Fibonacci lattice of `lattice_points`
// over the sphere (poleward of kBlobMinAbsLat), scaled so that their mean
// point standard deviation over the sector is `std` m, and their AR(1)
// weights. The large-scale noise takes streams kBlobStream and kNoiseStream,
// the small-scale one kSmallBlobStream and kSmallNoiseStream.
void World::plant_noise(std::uint64_t stream, int lattice_points, double radius_min, double radius_max, double std) {
  const std::size_t first = blobs_.size();
  Rng blob_rng(derive_seed(seed_, {stream}));
  const double golden = 180.0 * (3.0 - std::sqrt(5.0));  // golden angle, degrees
  const double rotation = 360.0 * blob_rng.uniform();
  for (int i = 0; i < lattice_points; ++i) {
    double z = 1.0 - (2.0 * i + 1.0) / lattice_points;
    double lat = std::asin(z) / kDeg + 4.0 * (blob_rng.uniform() - 0.5);
    double lon = std::fmod(rotation + golden * i + 4.0 * (blob_rng.uniform() - 0.5), 360.0);
    double radius = radius_min + (radius_max - radius_min) * blob_rng.uniform();
    if (std::abs(lat) >= kBlobMinAbsLat) blobs_.push_back({lat, lon, 1.0, radius});
  }
  double sum_sd = 0.0;
  int n = 0;
  for (double lat = 20; lat <= 80; lat += 2.5)
    for (double lon = 170; lon <= 320; lon += 2.5) {
      double var = 0.0;
      for (std::size_t k = first; k < blobs_.size(); ++k) var += std::pow(gaussian(blobs_[k], lat, lon), 2);
      sum_sd += noise_envelope(lat) * std::sqrt(var);
      ++n;
    }
  blob_scale_.resize(blobs_.size(), std / (sum_sd / n));

  const std::size_t nb = blobs_.size() - first, n_days = noise_.n_cols;
  Rng noise_rng(derive_seed(seed_, {stream == kBlobStream ? kNoiseStream : kSmallNoiseStream}));
  const double innovation = std::sqrt(1.0 - kNoiseLag1 * kNoiseLag1);
  arma::mat w(nb, n_days);
  for (std::size_t k = 0; k < nb; ++k) w(k, 0) = noise_rng.normal();
  for (std::size_t j = 1; j < n_days; ++j)
    for (std::size_t k = 0; k < nb; ++k) w(k, j) = kNoiseLag1 * w(k, j - 1) + innovation * noise_rng.normal();
  noise_ = arma::join_cols(noise_, w);
}

int World::next_state(int from, double u) const {
  if (from < 0) return -1;  // no regimes planted
  const auto& row = markov_[static_cast<std::size_t>(from)];
  double acc = 0.0;
  for (std::size_t j = 0; j < row.size(); ++j) {
    acc += row[j];
    if (u < acc) return static_cast<int>(j);
  }
  return static_cast<int>(row.size()) - 1;
}

int World::stationary_state(double u) const {
  double acc = 0.0;
  for (std::size_t j = 0; j < stationary_.size(); ++j) {
    acc += stationary_[j];
    if (u < acc) return static_cast<int>(j);
  }
  return static_cast<int>(stationary_.size()) - 1;  // -1 without regimes; rounding of the sum otherwise
}

std::size_t World::n_terms() const { return kRegime0 + regimes_.size() + 1 + blobs_.size(); }

arma::mat World::terms(const Points& points) const {
  arma::mat g(points.size(), n_terms());
  const std::size_t drift_term = kRegime0 + regimes_.size();
  for (std::size_t p = 0; p < points.size(); ++p) {
    double lat = points.lat[p], lon = points.lon[p];
    g(p, kMean) = clim_mean(lat, lon);
    g(p, kAnnual) = clim_annual(lat, lon);
    g(p, kSemi) = clim_semiannual(lat, lon);
    g(p, kTrend) = 1.0;
    for (int r = 0; r < n_regimes(); ++r) g(p, kRegime0 + r) = regime_anomaly(r, lat, lon);
    g(p, drift_term) = drift_.value(lat, lon);
    for (std::size_t k = 0; k < blobs_.size(); ++k)
      g(p, drift_term + 1 + k) = blob_scale_[k] * noise_envelope(lat) * gaussian(blobs_[k], lat, lon);
  }
  return g;
}

double World::regime_anomaly(int r, double lat, double lon) const {
  double mean = 0.0;
  for (int j = 0; j < n_regimes(); ++j) mean += stationary_[static_cast<std::size_t>(j)] * regimes_[j].value(lat, lon);
  return regimes_[static_cast<std::size_t>(r)].value(lat, lon) - mean;
}

std::size_t World::day_index(const Date& real) const {
  Date d{real.year, real.month, real.day, Calendar::Standard};
  auto j = isohypse::days_between(kFirstDay, d);
  if (j < 0 || j >= static_cast<std::int64_t>(states_.size()))
    throw isohypse::InputError("demo world: day " + isohypse::to_string(real) + " is outside the world's record " +
                               isohypse::to_string(kFirstDay) + ".." + isohypse::to_string(kLastDay));
  return static_cast<std::size_t>(j);
}

int World::truth_regime(const Date& real) const { return states_[day_index(real)]; }

int World::label(const Date& real) const { return cold_season(real) ? truth_regime(real) : -1; }

void World::fill_coefs(double* c, const Date& real, int regime, double drift_factor, const double* noise) const {
  double t = years_since_2000(real);
  c[kMean] = 1.0;
  c[kAnnual] = std::cos(2.0 * std::numbers::pi * (t - kSummerPeak));
  c[kSemi] = std::cos(4.0 * std::numbers::pi * (t - kSemiPhase));
  c[kTrend] = kTrendPerYear * (t - (kTrendYear0 - 2000));
  for (int r = 0; r < n_regimes(); ++r) c[kRegime0 + r] = r == regime ? regime_taper(real) : 0.0;
  const std::size_t drift_term = kRegime0 + regimes_.size();
  c[drift_term] = drift_factor;
  // Northern summer days are calmer.
  const double calm = 1.0 - kSummerCalm * 0.5 * (1.0 + c[kAnnual]);
  for (std::size_t k = 0; k < blobs_.size(); ++k) c[drift_term + 1 + k] = calm * noise[k];
}

arma::vec World::truth_coefs(const Date& real) const {
  std::size_t j = day_index(real);
  arma::vec c(n_terms());
  fill_coefs(c.memptr(), real, states_[j], 0.0, noise_.colptr(j));
  return c;
}

Trajectory World::member(const Date& init, int member, ModelSystem system) const {
  const std::uint64_t stream = system == ModelSystem::skilful ? kMemberStream : kNoSkillMemberStream;
  Rng rng(derive_seed(seed_, {stream, static_cast<std::uint64_t>(isohypse::day_number(init)),
                              static_cast<std::uint64_t>(member)}));
  if (system == ModelSystem::skilful) {
    const double divergence = -kDivergenceMean * std::log(1.0 - rng.uniform());
    return trajectory(init, rng, divergence, truth_regime(init), true);
  }
  // No skill: nothing of the truth's day enters, neither its regime nor its
  // noise; the start is a draw of the climate the chain settles to.
  const int start = stationary_state(rng.uniform());
  return trajectory(init, rng, 0.0, start, false);
}

// The draws come in the order the skilful members always took them (their
// divergence before this call, then the own noise, then per lead a chain step
// after divergence and the noise innovations), so their files stay the same.
Trajectory World::trajectory(const Date& init, Rng& rng, double divergence, int start, bool truth_noise) const {
  const Date model_init = isohypse::make_date(init.year, init.month, init.day, Calendar::NoLeap);
  const std::size_t nb = blobs_.size();
  const double innovation = std::sqrt(1.0 - kNoiseLag1 * kNoiseLag1);
  arma::vec own(nb), mixed(nb);
  for (auto& e : own) e = rng.normal();

  Trajectory tr;
  tr.coefs.set_size(n_terms(), kLeads);
  int state = start;
  for (int lead = 0; lead < kLeads; ++lead) {
    Date valid = isohypse::add_days(model_init, lead);
    Date real = isohypse::make_date(valid.year, valid.month, valid.day, Calendar::Standard);
    std::size_t j = day_index(real);
    if (lead > 0) {
      state = lead < divergence ? states_[j] : next_state(state, rng.uniform());
      for (auto& e : own) e = kNoiseLag1 * e + innovation * rng.normal();
    }
    if (truth_noise) {
      double r = std::exp(-lead / kNoiseMemory);
      mixed = r * noise_.col(j) + std::sqrt(1.0 - r * r) * own;
    } else {
      mixed = own;
    }
    fill_coefs(tr.coefs.colptr(static_cast<arma::uword>(lead)), real, state, 1.0 - std::exp(-lead / kDriftEfold),
               mixed.memptr());
    tr.regime.push_back(state);
    tr.valid.push_back(valid);
  }
  return tr;
}

nlohmann::json World::noise_json() const {
  return {{"kind", "Gaussian centres on a jittered Fibonacci lattice, each weight an AR(1) series"},
          {"n_centres", large_blobs_},
          {"radius_deg", {kBlobRadiusMin, kBlobRadiusMax}},
          {"min_abs_lat", kBlobMinAbsLat},
          {"sector_mean_point_std_m", kNoiseStd},
          {"lag1", kNoiseLag1},
          {"latitude_envelope", "0.2 equatorward of 28 degrees, 1 from 55 to 70, 0.7 at the pole"},
          {"summer_reduction", kSummerCalm}};
}

nlohmann::json World::small_noise_json() const {
  return {
      {"kind", "a second set of Gaussian centres on its own jittered Fibonacci lattice, each an AR(1) series"},
      {"n_centres", blobs_.size() - large_blobs_},
      {"radius_deg", {kSmallRadiusMin, kSmallRadiusMax}},
      {"sector_mean_point_std_m", spec_.small_noise_std},
      {"lag1", kNoiseLag1},
      {"latitude_envelope", "as the large-scale noise's"}};
}

nlohmann::json World::members_json(ModelSystem system) const {
  if (system == ModelSystem::skilful)
    return {{"divergence_lead", "exponential with mean divergence_mean_days; lead 0 is always the truth"},
            {"divergence_mean_days", kDivergenceMean},
            {"regime", "truth's state for lead < divergence lead, then the member's own Markov chain"},
            {"noise", "r * truth + sqrt(1 - r^2) * own AR(1), r = exp(-lead / memory_days)"},
            {"noise_memory_days", kNoiseMemory},
            {"calendar", "noleap; a model day maps to the real day with the same year-month-day"}};
  return {{"divergence_lead", 0},
          {"regime", "the member's own Markov chain (the world's matrix) from lead 0, its lead-0 state drawn from "
                     "the chain's stationary distribution, independent of the truth"},
          {"noise", "the member's own AR(1) from lead 0 (unit variance at lead 0), none of the truth's"},
          {"drift", "as the skilful members': D(x) * (1 - exp(-lead / efold_days))"},
          {"random_stream", "its own (seed, stream 7, init, member): the skilful system's files do not move"},
          {"calendar", "noleap; a model day maps to the real day with the same year-month-day"}};
}

nlohmann::json World::describe() const {
  using nlohmann::json;
  auto centres = [](const Pattern& p) {
    json a = json::array();
    for (const auto& c : p.centres)
      a.push_back({{"lat", c.lat}, {"lon", c.lon}, {"amplitude_m", c.amplitude}, {"radius_deg", c.radius}});
    return a;
  };
  json j;
  j["pattern_shape"] =
      "shape = sum over centres of amplitude_m * exp(-0.5 * (d / radius_deg)^2), d = great-circle distance in "
      "degrees; anomaly pattern of regime r = shape_r - sum_j stationary[j] * shape_j (zero climatological mean)";
  j["n_regimes"] = n_regimes();
  j["noise_only"] = spec_.noise_only;
  j["stationary"] = stationary_;
  j["regimes"] = json::array();
  for (int r = 0; r < n_regimes(); ++r)
    j["regimes"].push_back({{"index", r}, {"name", regimes_[r].name}, {"centres", centres(regimes_[r])}});
  std::vector<double> residence;
  for (int r = 0; r < n_regimes(); ++r) residence.push_back(1.0 / (1.0 - markov_[r][r]));
  j["markov"] = {{"matrix", markov_},
                 {"note", spec_.noise_only ? "no regimes planted: red noise and climatology only"
                                           : "row = today's regime, column = tomorrow's; the chain runs every day "
                                             "of the year"},
                 {"residence_days", residence}};
  j["regime_amplitude"] = {{"cold_season_months", {11, 12, 1, 2, 3}},
                           {"off_season_factor", kOffSeasonTaper},
                           {"ramps", "linear through April (1 -> 0.2) and October (0.2 -> 1)"}};
  j["drift"] = {{"name", drift_.name},
                {"centres", centres(drift_)},
                {"formula", "drift(x, lead) = D(x) * (1 - exp(-lead / efold_days))"},
                {"efold_days", kDriftEfold},
                {"resembles_regime", spec_.noise_only ? json(nullptr) : json(0)}};
  j["noise"] = noise_json();
  if (spec_.small_noise_std > 0.0) j["small_scale_noise"] = small_noise_json();
  j["members"] = members_json(ModelSystem::skilful);
  j["members_noskill"] = members_json(ModelSystem::no_skill);
  j["climatology"] = {
      {"zonal_mean_winter_m", "5845 (subtropics) to 5230 (pole)"},
      {"zonal_mean_summer_m", "5885 (subtropics) to 5550 (pole)"},
      {"annual_harmonic_peak_year_fraction", kSummerPeak},
      {"semiannual_amplitude_m", "up to 15 near the pole"},
      {"stationary_waves", "wavenumbers 2 (50 m) and 3 (25 m) near 50N, 40% weaker in summer"},
      {"trend_m_per_decade", 10.0 * kTrendPerYear},
      {"trend_zero_year", kTrendYear0}};
  j["squash"] = {{"low_m", kSquashLow},
                 {"high_m", kSquashHigh},
                 {"width_m", kSquashWidth},
                 {"formula", "h > high becomes high + width * tanh((h - high) / width); h < low likewise "
                             "downward: a smooth ceiling and floor on the rare Gaussian tails"}};
  return j;
}

Surface::Surface(const World& world, const Points& points) {
  arma::mat all = world.terms(points);
  std::vector<arma::uword> keep;
  for (arma::uword k = 0; k < all.n_cols; ++k)
    if (arma::abs(all.col(k)).max() > 1e-3) keep.push_back(k);
  keep_ = arma::uvec(keep);
  terms_ = all.cols(keep_);
}

arma::mat Surface::heights(const arma::mat& coefs) const {
  arma::mat h = terms_ * coefs.rows(keep_);
  // The Gaussian tails of regime plus noise would now and then give 500 hPa
  // heights no atmosphere has; squash them smoothly (see kSquashHigh).
  h.transform([](double x) {
    if (x > kSquashHigh) return kSquashHigh + kSquashWidth * std::tanh((x - kSquashHigh) / kSquashWidth);
    if (x < kSquashLow) return kSquashLow - kSquashWidth * std::tanh((kSquashLow - x) / kSquashWidth);
    return x;
  });
  return h;
}

}  // namespace demo
