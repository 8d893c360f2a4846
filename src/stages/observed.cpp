#include "isohypse/stages/observed.hpp"

#include "isohypse/numerics/climatology.hpp"
#include "isohypse/numerics/eof.hpp"
#include "isohypse/base/error.hpp"
#include "isohypse/io/forecast.hpp"
#include "isohypse/numerics/labeller.hpp"
#include "isohypse/io/reader.hpp"

namespace isohypse {

std::vector<int> label_anomalies(const RegimeModel& model, const arma::fmat& anomalies, arma::vec* correlation) {
  RegimeLabeller labeller(model);
  return labeller.label(anomalies, correlation);
}

ObservedSequence observed_from_files(const RegimeModel& model, const std::vector<std::string>& paths,
                                     const std::string& variable, const std::optional<Date>& from,
                                     const std::optional<Date>& to) {
  ReadOptions ro;
  ro.variable = variable;
  ro.domain = model.domain;
  Field f = read_heights(expand_paths(paths), ro);
  std::vector<arma::uword> keep;
  for (std::size_t t = 0; t < f.dates.size(); ++t) {
    Date real = to_real_calendar(f.dates[t]);
    if (from && days_between(*from, real) < 0) continue;
    if (to && days_between(real, *to) < 0) continue;
    keep.push_back(t);
  }
  ObservedSequence out;
  out.source = "analysis files";
  if (keep.empty()) return out;
  arma::fmat v = f.values.cols(arma::uvec(keep));
  std::vector<Date> dates;
  for (auto t : keep) dates.push_back(f.dates[t]);
  v = Regridder(f.grid, model.grid, f.sources.front()).apply(v);
  v -= model.climatology.evaluate(dates);
  v.replace(arma::datum::nan, 0.0f);
  running_mean(v, dates, model.running_mean_days);
  out.labels = label_anomalies(model, std::move(v));
  for (const auto& d : dates) out.dates.push_back(to_real_calendar(d));
  return out;
}

ObservedSequence observed_from_model(const RegimeModel& model) {
  ObservedSequence out;
  out.source = "regime model record";
  for (std::size_t t = 0; t < model.dates.size(); ++t) {
    out.dates.push_back(to_real_calendar(model.dates[t]));
    out.labels.push_back(model.labels[t] < 0 ? model.k() : model.labels[t]);
  }
  return out;
}

}  // namespace isohypse
