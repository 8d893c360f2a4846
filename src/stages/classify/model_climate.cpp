#include "stages/classify/model_climate.hpp"

#include <algorithm>
#include <cstdlib>
#include <map>
#include <memory>
#include <mutex>
#include <set>

#include "base/parallel.hpp"
#include "isohypse/base/error.hpp"
#include "isohypse/io/reader.hpp"
#include "isohypse/numerics/climatology.hpp"
#include "isohypse/numerics/model_drift.hpp"

namespace isohypse {

namespace {

// The model-calendar valid dates of an initialisation's first `leads` lead days.
std::vector<Date> lead_dates(const Initialisation& in, int leads) {
  std::vector<Date> d;
  for (int l = 0; l < leads; ++l) d.push_back(in.valid_model(l));
  return d;
}

// Reforecast initialisations within the window of days of the year of `in`
// with at least its lead days.
std::vector<const Initialisation*> near_reforecasts(const std::vector<Initialisation>& reforecasts,
                                                    const Initialisation& in, int window_days) {
  std::vector<const Initialisation*> near;
  for (const auto& r : reforecasts)
    if (days_apart_in_year(r.init, in.init) <= window_days && r.n_leads >= in.n_leads) near.push_back(&r);
  if (near.empty())
    throw InputError("no reforecast initialised within " + std::to_string(window_days) + " days of the year of " +
                     in.id() + " with at least " + std::to_string(in.n_leads) + " lead days (reforecasts run from " +
                     reforecasts.front().id() + " to " + reforecasts.back().id() + ")");
  return near;
}

// Every reforecast initialisation that some chosen one needs, in reforecast order.
std::vector<const Initialisation*> reforecasts_needed(const std::vector<Initialisation>& reforecasts,
                                                      const std::vector<const Initialisation*>& chosen,
                                                      int window_days) {
  std::set<const Initialisation*> wanted;
  for (const auto* in : chosen)
    for (const auto* r : near_reforecasts(reforecasts, *in, window_days)) wanted.insert(r);
  std::vector<const Initialisation*> needed;
  for (const auto& r : reforecasts)
    if (wanted.count(&r)) needed.push_back(&r);
  return needed;
}

// The drift sum of each needed reforecast initialisation (its members minus
// the regime model's climatology at their valid dates), each read once.
// Threads share the initialisations (reads under a lock: netCDF-C is not
// thread-safe); each sums its members in order, so the result does not
// depend on the threads.
std::vector<DriftSum> sum_members(const RegimeModel& model, const std::vector<const Initialisation*>& needed,
                                  const Regridder& regrid, const ClassifyConfig& cfg, const ClassifyProgress& report) {
  EnsembleReader reader(needed, regrid, cfg.variable);
  std::vector<std::size_t> first_slot(needed.size() + 1, reader.size());
  for (std::size_t k = reader.size(); k-- > 0;) first_slot[reader.slot(k).init] = k;
  std::mutex netcdf;
  detail::StatePool<EnsembleReader::Work> buffers([] { return std::make_unique<EnsembleReader::Work>(); });
  std::vector<DriftSum> sums(needed.size());
  report("reforecasts", 0, static_cast<int>(needed.size()));
  detail::parallel_for(
      needed.size(), cfg.threads,
      [&](std::size_t u) {
        const auto w = buffers.lease();
        const arma::fmat climate = model.climatology.evaluate(lead_dates(*needed[u], needed[u]->n_leads));
        for (std::size_t k = first_slot[u]; k < reader.size() && reader.slot(k).init == u; ++k) {
          reader.fetch(k, netcdf, *w);
          add_member(sums[u], w->heights, climate);
        }
      },
      [&](std::size_t done, std::size_t n) { report("reforecasts", static_cast<int>(done), static_cast<int>(n)); });
  return sums;
}

// The mean drift of `in`'s near reforecasts by lead, smoothed in lead
// (numerics/model_drift.hpp).
arma::fmat drift_of(const RegimeModel& model, const Initialisation& in, const std::vector<const Initialisation*>& near,
                    const std::map<std::string, DriftSum>& sums, int smoothing_days) {
  std::vector<const DriftSum*> parts;
  for (const auto* r : near) parts.push_back(&sums.at(r->id()));
  return mean_drift(parts, model.grid.n_points(), lead_dates(in, in.n_leads), smoothing_days);
}

}  // namespace

std::vector<Initialisation> scan_reforecasts(const RegimeModel& model, const ClassifyConfig& cfg,
                                             const LaggedEnsemble& ensemble, const ClassifyProgress& report) {
  if (cfg.reforecasts.empty()) return {};
  const std::vector<std::string> paths = expand_paths(cfg.reforecasts);
  report("scan reforecasts", 0, static_cast<int>(paths.size()));
  std::vector<Initialisation> refc = scan_forecasts(paths, cfg.variable, model.domain, &model.grid);
  const Initialisation& fc = ensemble.latest();
  const Grid& rg = refc.front().native_grid;
  if (!rg.same_as(fc.native_grid))
    throw InputError(refc.front().files.front() + ": the reforecast grid (" + std::to_string(rg.n_lat()) + " x " +
                     std::to_string(rg.n_lon()) + " over the domain) does not match the forecast grid of " +
                     fc.files.front() + " (" + std::to_string(fc.native_grid.n_lat()) + " x " +
                     std::to_string(fc.native_grid.n_lon()) + ")");
  return refc;
}

ModelClimate build_model_climate(const RegimeModel& model, const ClassifyConfig& cfg, const LaggedEnsemble& ensemble,
                                 const std::vector<Initialisation>& reforecasts, const ClassifyProgress& report) {
  ModelClimate c;
  c.from_reforecasts = !reforecasts.empty();
  if (!c.from_reforecasts) {
    for (const auto& valid : ensemble.valid_model) c.by_initialisation.push_back(model.climatology.evaluate(valid));
    return c;
  }
  const int window = cfg.reforecast_window_days;
  const std::vector<const Initialisation*> needed = reforecasts_needed(reforecasts, ensemble.chosen, window);
  std::vector<DriftSum> sums = sum_members(model, needed, ensemble.regrid, cfg, report);
  std::map<std::string, DriftSum> by_id;
  for (std::size_t u = 0; u < needed.size(); ++u) {
    for (const auto& f : needed[u]->files) c.reforecast_files_read.push_back(f);
    by_id.emplace(needed[u]->id(), std::move(sums[u]));
  }
  // Initialisations with the same near reforecasts and the same lead days
  // share one drift (the lead days count: the running mean in lead ends at
  // the last lead); each adds the climatology of its own valid dates.
  std::map<std::string, arma::fmat> shared;
  for (const auto* in : ensemble.chosen) {
    const std::vector<const Initialisation*> near = near_reforecasts(reforecasts, *in, window);
    std::string key = std::to_string(in->n_leads) + " leads:";
    for (const auto* r : near) key += r->id() + ";";
    auto it = shared.find(key);
    if (it == shared.end())
      it = shared.emplace(key, drift_of(model, *in, near, by_id, cfg.lead_smoothing_days)).first;
    c.by_initialisation.push_back(model.climatology.evaluate(lead_dates(*in, in->n_leads)) + it->second);
  }
  return c;
}

}  // namespace isohypse
