// isohypse verify: a season of guidance against what happened.
#include <iostream>

#include "cli/commands.hpp"
#include "isohypse/io/regime_model_file.hpp"
#include "isohypse/base/atomic_file.hpp"
#include "isohypse/stages/classify.hpp"
#include "isohypse/base/error.hpp"
#include "isohypse/stages/verify.hpp"
#include "isohypse/render/report_page.hpp"

namespace isohypse::cli {

void add_verify(CLI::App& app) {
  struct Args {
    std::string model, out, html, from, to, windows, variable;
    std::vector<std::string> guidance, observed;
    int resamples = 1000;
  };
  auto a = std::make_shared<Args>();
  CLI::App* sub = app.add_subcommand("verify", "Post-mortem: verify a season of regime guidance against observations");
  sub->add_option("--model", a->model, "Regime model file the guidance was made with")->required();
  sub->add_option("--guidance", a->guidance, "Guidance JSON files, folders or quoted globs")->required();
  sub->add_option("--observed", a->observed,
                  "Analysis/reanalysis files or globs (default: the labels in the model, where its record covers the period)");
  sub->add_option("--from", a->from, "First valid date, YYYY-MM-DD");
  sub->add_option("--to", a->to, "Last valid date, YYYY-MM-DD");
  sub->add_option("--out", a->out, "Report JSON to write")->required();
  sub->add_option("--html", a->html, "Also write a self-contained HTML report");
  sub->add_option("--windows", a->windows, "Lead-day windows (default 1-3,4-7,8-14,15-28,29-45)");
  sub->add_option("--variable", a->variable, "Height variable of the observed files");
  sub->add_option("--bootstrap", a->resamples, "Bootstrap resamples for the intervals")->capture_default_str();
  sub->callback([a] {
    VerifyConfig cfg;
    cfg.guidance = a->guidance;
    cfg.observed = a->observed;
    cfg.variable = a->variable;
    if (!a->from.empty()) cfg.from = parse_date(a->from, Calendar::ProlepticGregorian, "--from");
    if (!a->to.empty()) cfg.to = parse_date(a->to, Calendar::ProlepticGregorian, "--to");
    if (cfg.from && cfg.to && days_between(*cfg.from, *cfg.to) < 0) throw InputError("--from is after --to");
    if (!a->windows.empty()) cfg.windows = parse_windows(a->windows);
    if (a->resamples < 10) throw InputError("--bootstrap needs at least 10 resamples");
    cfg.bootstrap_resamples = a->resamples;
    RegimeModel model = read_regime_model(a->model);
    nlohmann::json rep = verify_guidance(model, cfg);
    write_file_atomically(a->out, rep.dump(1) + "\n");
    if (!a->html.empty()) write_file_atomically(a->html, verification_html(rep));
    std::cout << verification_text(rep) << "\nreport written to " << a->out << "\n";
    if (!a->html.empty()) std::cout << "page written to " << a->html << "\n";
  });
}

}  // namespace isohypse::cli
