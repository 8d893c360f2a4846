#include "stages/calibrate/reforecast_labels.hpp"

#include <algorithm>
#include <map>
#include <memory>
#include <mutex>
#include <numeric>
#include <utility>

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

// For each initialisation, its reader slots (slots run initialisation by initialisation).
std::vector<std::pair<std::size_t, std::size_t>> slot_ranges(const EnsembleReader& reader, std::size_t n_inits) {
  std::vector<std::pair<std::size_t, std::size_t>> range(n_inits, {reader.size(), reader.size()});
  for (std::size_t k = reader.size(); k-- > 0;) range[reader.slot(k).init].first = k;
  for (std::size_t k = 0; k < reader.size(); ++k) range[reader.slot(k).init].second = k + 1;
  return range;
}

struct Worker {
  explicit Worker(const RegimeModel& m) : labeller(m) {}
  EnsembleReader::Work work;
  EnsembleReader::Times times;
  RegimeLabeller labeller;
};

// The reading order: by place in the year, from the day after the widest
// gap between the days that hold initialisations (so that a cold season's
// drift windows do not wrap round the year), then by date.
std::vector<std::size_t> reading_order(const ReforecastSet& set) {
  const std::size_t n = set.inits.size();
  std::vector<int> place(n);
  for (std::size_t i = 0; i < n; ++i) place[i] = position_in_365_day_year(set.inits[i].init);
  std::vector<int> days(place);
  std::sort(days.begin(), days.end());
  days.erase(std::unique(days.begin(), days.end()), days.end());
  int start = 0, widest = -1;
  for (std::size_t k = 0; k < days.size(); ++k) {
    const int next = k + 1 < days.size() ? days[k + 1] : days.front() + 365;
    if (next - days[k] > widest) widest = next - days[k], start = next % 365;
  }
  std::vector<std::size_t> order(n);
  std::iota(order.begin(), order.end(), std::size_t{0});
  std::stable_sort(order.begin(), order.end(), [&](std::size_t a, std::size_t b) {
    return (place[a] - start + 365) % 365 < (place[b] - start + 365) % 365;
  });
  return order;
}

// The initialisations sharing a place in the year and a length share the
// drift's neighbours (of every year): their sum is formed once, and each
// member of the group takes its own season year's part out of it.
struct DriftGroup {
  std::vector<std::size_t> near;  // every initialisation within the window, at least as long
  arma::uword leads = 0;          // the group's lead days
  std::size_t ready = 0;          // the reading rank after which all of `near` is summed
  std::size_t waiting = 0;        // members not yet labelled
  arma::mat total;                // the sum over `near`, formed when first needed
  std::size_t members = 0;
};

struct Plan {
  std::vector<std::size_t> order, rank;  // rank[i]: position of i in order
  std::vector<std::size_t> group;        // per initialisation
  std::vector<DriftGroup> groups;
  std::vector<std::size_t> users;        // per initialisation: the groups whose `near` holds it, not yet done
};

Plan make_plan(const ReforecastSet& set, int window_days) {
  const std::size_t n = set.inits.size();
  Plan plan;
  plan.order = reading_order(set);
  plan.rank.resize(n);
  for (std::size_t r = 0; r < n; ++r) plan.rank[plan.order[r]] = r;
  std::map<std::pair<int, int>, std::size_t> index;
  plan.group.resize(n);
  for (std::size_t i = 0; i < n; ++i) {
    const Initialisation& in = set.inits[i];
    const auto key = std::make_pair(position_in_365_day_year(in.init), in.n_leads);
    auto [it, added] = index.emplace(key, plan.groups.size());
    if (added) {
      DriftGroup g;
      g.leads = static_cast<arma::uword>(in.n_leads);
      for (std::size_t j = 0; j < n; ++j)
        if (set.inits[j].n_leads >= in.n_leads && days_apart_in_year(set.inits[j].init, in.init) <= window_days) {
          g.near.push_back(j);
          g.ready = std::max(g.ready, plan.rank[j]);
        }
      plan.groups.push_back(std::move(g));
    }
    plan.group[i] = it->second;
    ++plan.groups[it->second].waiting;
  }
  plan.users.assign(n, 0);
  for (const DriftGroup& g : plan.groups)
    for (std::size_t j : g.near) ++plan.users[j];
  for (std::size_t i = 0; i < n; ++i) {  // fail before reading anything
    const auto& near = plan.groups[plan.group[i]].near;
    if (std::none_of(near.begin(), near.end(), [&](std::size_t j) { return set.season_year[j] != set.season_year[i]; }))
      throw InputError(set.inits[i].files.front() + ": no reforecast of another season year initialised within " +
                       std::to_string(window_days) + " days of the year of " + set.inits[i].id() + " with at least " +
                       std::to_string(set.inits[i].n_leads) +
                       " lead days, so its drift cannot be estimated without its own year");
  }
  return plan;
}

// The drift of initialisation i from the other season years: its group's
// total less its own season year's part, divided by the members left.
arma::fmat other_years_drift(const ReforecastSet& set, const Plan& plan, const std::vector<DriftSum>& sums,
                             std::size_t i, const std::vector<Date>& dates, int smoothing_days) {
  const DriftGroup& g = plan.groups[plan.group[i]];
  std::vector<const float*> own;
  std::size_t members = g.members;
  for (std::size_t j : g.near)
    if (set.season_year[j] == set.season_year[i]) {
      own.push_back(sums[j].difference.memptr());
      members -= sums[j].members;
    }
  if (members == 0) throw InternalError("other_years_drift: no member of another season year");
  // Columns 0..leads-1 of a sum are its first n_points * leads values.
  const std::size_t n = g.total.n_elem;
  const double* total = g.total.memptr();
  const double scale = 1.0 / static_cast<double>(members);
  arma::mat mean(g.total.n_rows, g.total.n_cols);
  double* out = mean.memptr();
  for (std::size_t e = 0; e < n; ++e) {
    double t = total[e];
    for (const float* o : own) t -= o[e];
    out[e] = t * scale;
  }
  return mean_drift(mean, 1, dates, smoothing_days);
}

void form_total(DriftGroup& g, const std::vector<DriftSum>& sums) {
  g.total.zeros(sums[g.near.front()].difference.n_rows, g.leads);
  g.members = 0;
  const std::size_t n = g.total.n_elem;  // columns 0..leads-1 of each sum: its first n values
  double* total = g.total.memptr();
  for (std::size_t j : g.near) {
    const float* d = sums[j].difference.memptr();
    for (std::size_t e = 0; e < n; ++e) total[e] += d[e];
    g.members += sums[j].members;
  }
}

// One labelling run: the readers, the plan, and what is held between rounds.
class Labelling {
public:
  Labelling(const RegimeModel& model, const CalibrateConfig& cfg, const ReforecastSet& set)
      : model_(model), cfg_(cfg), set_(set), n_(set.inits.size()), plan_(make_plan(set, cfg.reforecast_window_days)),
        reader_(in_plan_order(), set.regrid, cfg.variable), slots_(slot_ranges(reader_, n_)),
        workers_([&] { return std::make_unique<Worker>(model); }),
        batch_(std::max<std::size_t>(8, 4 * static_cast<std::size_t>(detail::resolve_threads(cfg.threads, n_)))),
        sums_(n_), fields_(n_) {
    out_.labels.resize(n_);
    choose_held();
  }

  // Rounds: each reads the next batch in plan order and labels every
  // initialisation whose drift neighbours were all read in earlier rounds.
  ReforecastLabels run(const CalibrateProgress& report) {
    std::size_t read_to = 0, labelled = 0;
    std::vector<char> done(n_);
    report("read and label", 0, static_cast<int>(n_));
    while (labelled < n_) {
      std::vector<std::size_t> ready;
      for (std::size_t r = 0; r < read_to; ++r) {
        const std::size_t i = plan_.order[r];
        if (!done[i] && plan_.groups[plan_.group[i]].ready < read_to) ready.push_back(i);
      }
      form_totals(ready);
      const std::size_t reads = std::min(batch_, n_ - read_to);
      detail::parallel_for(ready.size() + reads, cfg_.threads, [&](std::size_t t) {
        if (t < reads) read_one(read_to + t);
        else label_one(ready[t - reads]);
      });
      read_to += reads;
      for (std::size_t i : ready) {
        done[i] = 1;
        ++labelled;
        release(i);
      }
      report("read and label", static_cast<int>(labelled), static_cast<int>(n_));
    }
    out_.threads = static_cast<int>(workers_.all().size());
    for (const auto& w : workers_.all()) {
      out_.read_s += w->times.read_s;
      out_.decode_s += w->times.finish_s;
    }
    return std::move(out_);
  }

private:
  std::vector<const Initialisation*> in_plan_order() const {
    std::vector<const Initialisation*> all;
    for (std::size_t r = 0; r < n_; ++r) all.push_back(&set_.inits[plan_.order[r]]);
    return all;
  }

  // An initialisation's fields are held from its read to its labels when
  // the labels come soon enough for cfg.held_fields_mb (always on the demo:
  // a few weeks of the year are held at a time, unless the drift windows
  // wrap round the year); the others are read a second time.
  void choose_held() {
    std::size_t init_bytes = 1;
    for (const auto& in : set_.inits)
      init_bytes = std::max<std::size_t>(init_bytes, in.members.size() * model_.grid.n_points() *
                                                         static_cast<std::size_t>(in.n_leads) * sizeof(float));
    const std::size_t hold =
        std::max(batch_, static_cast<std::size_t>(cfg_.held_fields_mb) * (std::size_t{1} << 20) / init_bytes);
    held_.assign(n_, 0);
    std::vector<const Initialisation*> again;
    for (std::size_t i = 0; i < n_; ++i) {
      held_[i] = plan_.groups[plan_.group[i]].ready - plan_.rank[i] <= hold;
      if (held_[i]) continue;
      again_index_[i] = again.size();
      again.push_back(&set_.inits[i]);
    }
    if (again.empty()) return;
    again_ = std::make_unique<EnsembleReader>(again, set_.regrid, cfg_.variable);
    again_slots_ = slot_ranges(*again_, again.size());
  }

  // Reads (with the drift sums) of the initialisation at rank r.
  void read_one(std::size_t r) {
    const std::size_t i = plan_.order[r];
    const auto w = workers_.lease();
    const arma::fmat climate = model_.climatology.evaluate(lead_dates(set_.inits[i]));
    if (held_[i]) fields_[i].reserve(slots_[r].second - slots_[r].first);  // a growing vector would copy them
    for (std::size_t k = slots_[r].first; k < slots_[r].second; ++k) {
      reader_.fetch(k, netcdf_, w->work, &w->times);
      add_member(sums_[i], w->work.heights, climate);
      if (held_[i]) fields_[i].push_back(std::move(w->work.heights));  // the next read allocates afresh
    }
  }

  // The labels of initialisation i, against the other years' drift.
  void label_one(std::size_t i) {
    const auto w = workers_.lease();
    const std::vector<Date> dates = lead_dates(set_.inits[i]);
    const arma::fmat reference = model_.climatology.evaluate(dates) +
                                 other_years_drift(set_, plan_, sums_, i, dates, cfg_.lead_smoothing_days);
    auto label = [&](const arma::fmat& heights) {
      out_.labels[i].push_back(w->labeller.label(heights, reference, dates, model_.running_mean_days));
    };
    if (held_[i]) {
      for (const arma::fmat& f : fields_[i]) label(f);
      std::vector<arma::fmat>().swap(fields_[i]);
      return;
    }
    const auto [k0, k1] = again_slots_[again_index_.at(i)];
    for (std::size_t k = k0; k < k1; ++k) {
      again_->fetch(k, netcdf_, w->work, &w->times);
      label(w->work.heights);
    }
  }

  // The drift totals of the groups of `ready` not formed yet.
  void form_totals(const std::vector<std::size_t>& ready) {
    std::vector<std::size_t> to_total;
    for (std::size_t i : ready) {
      const std::size_t g = plan_.group[i];
      if (plan_.groups[g].total.is_empty() && std::find(to_total.begin(), to_total.end(), g) == to_total.end())
        to_total.push_back(g);
    }
    detail::parallel_for(to_total.size(), cfg_.threads,
                         [&](std::size_t t) { form_total(plan_.groups[to_total[t]], sums_); });
  }

  // After i's labels: its group's total once the group is done, and the sums no other group needs.
  void release(std::size_t i) {
    DriftGroup& g = plan_.groups[plan_.group[i]];
    if (--g.waiting > 0) return;
    g.total.reset();
    for (std::size_t j : g.near)
      if (--plan_.users[j] == 0) sums_[j].difference.reset();
  }

  const RegimeModel& model_;
  const CalibrateConfig& cfg_;
  const ReforecastSet& set_;
  const std::size_t n_;
  Plan plan_;
  EnsembleReader reader_;
  const std::vector<std::pair<std::size_t, std::size_t>> slots_;  // by rank
  std::mutex netcdf_;
  detail::StatePool<Worker> workers_;
  const std::size_t batch_;
  std::vector<char> held_;
  std::unique_ptr<EnsembleReader> again_;
  std::vector<std::pair<std::size_t, std::size_t>> again_slots_;
  std::map<std::size_t, std::size_t> again_index_;
  std::vector<DriftSum> sums_;
  std::vector<std::vector<arma::fmat>> fields_;
  ReforecastLabels out_;
};

}  // namespace

ReforecastLabels label_reforecasts(const RegimeModel& model, const CalibrateConfig& cfg, const ReforecastSet& set,
                                   const CalibrateProgress& report) {
  return Labelling(model, cfg, set).run(report);
}

}  // namespace isohypse
