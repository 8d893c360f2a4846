#include "stages/classify/member_labels.hpp"

#include <chrono>
#include <memory>
#include <mutex>
#include <string>

#include "base/parallel.hpp"
#include "isohypse/base/error.hpp"
#include "isohypse/base/vocabulary.hpp"
#include "isohypse/numerics/labeller.hpp"

namespace isohypse {

namespace {

using json = nlohmann::json;
using Clock = std::chrono::steady_clock;

// One thread's buffers, reused member after member.
struct Worker {
  explicit Worker(const RegimeModel& m) : labeller(m) {}
  EnsembleReader::Work work;
  RegimeLabeller labeller;
  EnsembleReader::Times times;
  double label_s = 0;
};

// --members: one member's regimes by name and its correlation with the nearest centroid, by lead day.
json member_detail(const Initialisation& in, const MemberTrack& t, const std::vector<std::string>& states,
                   const arma::vec& correlation) {
  json labels = json::array();
  for (int l : t.labels) labels.push_back(states[static_cast<std::size_t>(l)]);
  json cor = json::array();
  for (double x : correlation) cor.push_back(number_or_null(x));
  return {{"initialisation", in.id()}, {"member", t.member}, {"weight", t.weight},
          {"first_valid_date", to_string(in.valid_real(0))}, {"first_lead_days", t.first_offset},
          {"regimes", labels}, {"correlation", cor}};
}

// The climate of each chosen initialisation must match its members: a bug otherwise.
void check_climate(const RegimeModel& model, const LaggedEnsemble& ensemble, const ModelClimate& climate) {
  if (climate.by_initialisation.size() != ensemble.chosen.size() ||
      ensemble.ages.size() != ensemble.chosen.size() || ensemble.weights.size() != ensemble.chosen.size() ||
      ensemble.valid_model.size() != ensemble.chosen.size())
    throw InternalError("label_members: " + std::to_string(ensemble.chosen.size()) + " initialisations, but " +
                        std::to_string(climate.by_initialisation.size()) + " climates, " +
                        std::to_string(ensemble.ages.size()) + " ages, " + std::to_string(ensemble.weights.size()) +
                        " weights and " + std::to_string(ensemble.valid_model.size()) + " lists of valid dates");
  for (std::size_t i = 0; i < ensemble.chosen.size(); ++i) {
    const arma::fmat& c = climate.by_initialisation[i];
    const int leads = ensemble.chosen[i]->n_leads;
    if (c.n_rows != model.grid.n_points() || c.n_cols != static_cast<arma::uword>(leads) ||
        ensemble.valid_model[i].size() != static_cast<std::size_t>(leads))
      throw InternalError("label_members: the climate of " + ensemble.chosen[i]->id() + " is " +
                          std::to_string(c.n_rows) + " x " + std::to_string(c.n_cols) + " for " +
                          std::to_string(model.grid.n_points()) + " points x " + std::to_string(leads) + " leads");
  }
}

}  // namespace

MemberLabels label_members(const RegimeModel& model, const ClassifyConfig& cfg, const LaggedEnsemble& ensemble,
                           const ModelClimate& climate, const ClassifyProgress& report) {
  check_climate(model, ensemble, climate);
  const std::vector<std::string> states = model_states(model);
  EnsembleReader reader(ensemble.chosen, ensemble.regrid, cfg.variable);
  const std::size_t n_members = reader.size();
  MemberLabels out;
  out.tracks.resize(n_members);
  out.detail.resize(cfg.member_detail ? n_members : 0);
  std::mutex netcdf;
  detail::StatePool<Worker> workers([&] { return std::make_unique<Worker>(model); });
  report("classify", 0, static_cast<int>(n_members));
  detail::parallel_for(
      n_members, cfg.threads,
      [&](std::size_t k) {
        const auto w = workers.lease();
        reader.fetch(k, netcdf, w->work, &w->times);
        const auto t0 = Clock::now();
        const std::size_t i = reader.slot(k).init;
        const Initialisation& in = *ensemble.chosen[i];
        MemberTrack& t = out.tracks[k];
        t.initialisation = in.id();
        t.member = in.members[reader.slot(k).member].number;
        t.weight = ensemble.weights[i];
        t.first_offset = -ensemble.ages[i];
        arma::vec cor;
        t.labels = w->labeller.label(w->work.heights, climate.by_initialisation[i], ensemble.valid_model[i],
                                     model.running_mean_days, &cor);
        if (cfg.member_detail) out.detail[k] = member_detail(in, t, states, cor);
        w->label_s += std::chrono::duration<double>(Clock::now() - t0).count();
      },
      [&](std::size_t done, std::size_t n) { report("classify", static_cast<int>(done), static_cast<int>(n)); });
  out.times.threads = static_cast<int>(workers.all().size());
  for (const auto& w : workers.all()) {
    out.times.read_s += w->times.read_s;
    out.times.unpack_s += w->times.finish_s;
    out.times.label_s += w->label_s;
  }
  return out;
}

}  // namespace isohypse
