#include "stages/calibrate/reforecast_labels.hpp"

#include <memory>
#include <mutex>

#include "base/parallel.hpp"
#include "isohypse/base/error.hpp"
#include "isohypse/numerics/labeller.hpp"
#include "isohypse/numerics/model_drift.hpp"

namespace isohypse {

namespace {

std::vector<Date> lead_dates(const Initialisation& in) {
  std::vector<Date> d;
  for (int l = 0; l < in.n_leads; ++l) d.push_back(in.valid_model(l));
  return d;
}

// For each initialisation, the first reader slot of its members (slots run initialisation by initialisation).
std::vector<std::size_t> first_slots(const EnsembleReader& reader, std::size_t n_inits) {
  std::vector<std::size_t> first(n_inits + 1, reader.size());
  for (std::size_t k = reader.size(); k-- > 0;) first[reader.slot(k).init] = k;
  return first;
}

struct Worker {
  explicit Worker(const RegimeModel& m) : labeller(m) {}
  EnsembleReader::Work work;
  EnsembleReader::Times times;
  RegimeLabeller labeller;
};

// The drift sums of the initialisations near `i`'s day of the year, of other season years, at least as long.
std::vector<const DriftSum*> other_years_near(const ReforecastSet& set, const std::vector<DriftSum>& sums,
                                              std::size_t i, int window_days) {
  std::vector<const DriftSum*> near;
  const Initialisation& in = set.inits[i];
  for (std::size_t j = 0; j < set.inits.size(); ++j)
    if (set.season_year[j] != set.season_year[i] && set.inits[j].n_leads >= in.n_leads &&
        days_apart_in_year(set.inits[j].init, in.init) <= window_days)
      near.push_back(&sums[j]);
  if (near.empty())
    throw InputError(in.files.front() + ": no reforecast of another season year initialised within " +
                     std::to_string(window_days) + " days of the year of " + in.id() + " with at least " +
                     std::to_string(in.n_leads) + " lead days, so its drift cannot be estimated without its own year");
  return near;
}

}  // namespace

ReforecastLabels label_reforecasts(const RegimeModel& model, const CalibrateConfig& cfg, const ReforecastSet& set,
                                   const CalibrateProgress& report) {
  std::vector<const Initialisation*> all;
  for (const auto& in : set.inits) all.push_back(&in);
  EnsembleReader reader(all, set.regrid, cfg.variable);
  const std::vector<std::size_t> first = first_slots(reader, all.size());
  std::mutex netcdf;
  detail::StatePool<Worker> workers([&] { return std::make_unique<Worker>(model); });
  const std::size_t n = all.size();

  // Pass 1: the drift sums.
  std::vector<DriftSum> sums(n);
  report("drift", 0, static_cast<int>(n));
  detail::parallel_for(
      n, cfg.threads,
      [&](std::size_t i) {
        const auto w = workers.lease();
        const arma::fmat climate = model.climatology.evaluate(lead_dates(*all[i]));
        for (std::size_t k = first[i]; k < reader.size() && reader.slot(k).init == i; ++k) {
          reader.fetch(k, netcdf, w->work, &w->times);
          add_member(sums[i], w->work.heights, climate);
        }
      },
      [&](std::size_t done, std::size_t total) { report("drift", static_cast<int>(done), static_cast<int>(total)); });
  for (std::size_t i = 0; i < n; ++i) other_years_near(set, sums, i, cfg.reforecast_window_days);  // fail early

  // Pass 2: the labels, against the other years' drift.
  EnsembleReader again(all, set.regrid, cfg.variable);
  ReforecastLabels out;
  out.labels.resize(n);
  report("label", 0, static_cast<int>(n));
  detail::parallel_for(
      n, cfg.threads,
      [&](std::size_t i) {
        const auto w = workers.lease();
        const std::vector<Date> dates = lead_dates(*all[i]);
        const arma::fmat reference =
            model.climatology.evaluate(dates) +
            mean_drift(other_years_near(set, sums, i, cfg.reforecast_window_days), model.grid.n_points(), dates,
                       cfg.lead_smoothing_days);
        for (std::size_t k = first[i]; k < again.size() && again.slot(k).init == i; ++k) {
          again.fetch(k, netcdf, w->work, &w->times);
          out.labels[i].push_back(w->labeller.label(w->work.heights, reference, dates, model.running_mean_days));
        }
      },
      [&](std::size_t done, std::size_t total) { report("label", static_cast<int>(done), static_cast<int>(total)); });
  out.threads = static_cast<int>(workers.all().size());
  for (const auto& w : workers.all()) out.read_s += w->times.read_s;
  return out;
}

}  // namespace isohypse
