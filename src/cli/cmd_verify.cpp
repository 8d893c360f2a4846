// isohypse verify: a season of guidance against what happened.
#include <iostream>
#include <memory>

#include "cli/commands.hpp"
#include "cli/options.hpp"
#include "isohypse/base/atomic_file.hpp"
#include "isohypse/io/regime_model_file.hpp"
#include "isohypse/render/report_page.hpp"
#include "isohypse/stages/verify.hpp"

namespace isohypse::cli {

namespace {

// What verify reads and writes besides its config.
struct VerifyFiles {
  std::string model, out, html;
};

}  // namespace

void add_verify(CLI::App& app) {
  auto cfg = std::make_shared<VerifyConfig>();
  auto files = std::make_shared<VerifyFiles>();
  CLI::App* sub = app.add_subcommand("verify", "Post-mortem: verify a season of regime guidance against observations");
  sub->add_option("--model", files->model, "Regime model file the guidance was made with")->required();
  sub->add_option("--guidance", cfg->guidance, "Guidance JSON files, folders or quoted globs")->required();
  sub->add_option(
      "--observed", cfg->observed,
      "Analysis/reanalysis files or globs (default: the labels in the model, where its record covers the period)");
  add_date_option(sub, "--from", cfg->from, "First valid date, YYYY-MM-DD");
  add_date_option(sub, "--to", cfg->to, "Last valid date, YYYY-MM-DD");
  sub->add_option("--out", files->out, "Report JSON to write")->required();
  sub->add_option("--html", files->html, "Also write a self-contained HTML report");
  add_windows_option(sub, cfg->windows);
  add_variable_option(sub, cfg->variable, "Observed files' height");
  sub->add_option("--bootstrap", cfg->bootstrap_resamples, "Bootstrap resamples for the intervals")
      ->capture_default_str();
  sub->add_option("--catch-margin", cfg->catch_margin,
                  "An episode is caught (and a false alarm made) only where its regime leads the second state by this")
      ->capture_default_str();
  sub->add_option("--catch-excess", cfg->catch_excess,
                  "... and exceeds its climatological frequency by this")
      ->capture_default_str();
  sub->add_option_function<std::string>(
         "--block-days", [cfg](const std::string& text) { cfg->block_length = BlockLength::parse(text); },
         "Interval blocks: N consecutive days of issue dates, or 'auto' (Wilks 1997); default the lag span + 7")
      ->type_name("N|auto");
  sub->add_option("--bins", cfg->reliability_bins,
                  "Fixed-width probability bins for the Brier decomposition and the reliability diagram (at least 2)")
      ->capture_default_str();
  sub->add_flag("--all-months", cfg->all_months,
                "Keep out-of-season valid dates, scored against monthly climatological frequencies from the model's "
                "record");
  sub->callback([cfg, files] {
    cfg->validate();  // before the model is read: a bad flag fails at once
    RunOutputs run;    // outputs checked against the inputs and for writability before any work
    run.input("--model", files->model);
    add_inputs(run, "--guidance", cfg->guidance, true);
    add_inputs(run, "--observed", cfg->observed);
    run.output("--out", files->out);
    run.output("--html", files->html);
    run.check();
    const RegimeModel model = read_regime_model(files->model);
    const nlohmann::json rep = verify_guidance(model, *cfg);
    write_file_atomically(run.stage(files->out), rep.dump(1) + "\n");
    if (!files->html.empty()) write_file_atomically(run.stage(files->html), verification_html(rep));
    run.commit();
    std::cout << verification_text(rep) << "\nreport written to " << files->out << "\n";
    if (!files->html.empty()) std::cout << "page written to " << files->html << "\n";
  });
}

}  // namespace isohypse::cli
