// The settings of `isohypse serve`: from a config file (keys as the fields
// below, plus "comment") and flags, checked in one place (validate), and
// turned into the stages' settings in one place (classify_options,
// verify_options).
#pragma once

#include <cstddef>
#include <nlohmann/json.hpp>
#include <string>
#include <vector>

#include "isohypse/stages/classify.hpp"
#include "isohypse/stages/verify.hpp"

namespace isohypse {

struct ServiceConfig {
  std::string model;                    // regime model file (required)
  std::string inbox;                    // forecast inbox folder (required)
  std::string archive;                  // guidance archive folder (required)
  std::string listen = "127.0.0.1:8642";  // ADDRESS:PORT; port 0 picks a free port
  std::vector<std::string> reforecasts; // files or globs; empty: no bias correction
  std::string calibration;              // isohypse calibrate's file for this model; empty: raw probabilities
  std::vector<std::string> observed;    // for verification; empty: the model's record
  std::string variable;                 // forecast height variable; empty: automatic
  int lag = 3;                          // initialisations in the lagged ensemble (0: all processed)
  std::string weights = "equal";        // equal | linear | exp:DAYS
  int members = 0;                      // expected members per initialisation (0: any)
  double poll_seconds = 10;             // inbox poll interval, 0.1 .. 3600
  std::string token;                    // write token for POST /api/v1/runs (never logged)
  std::string land_mask = "/usr/share/ncarg/data/cdf/landsea.nc";  // for coastlines; "" draws none
  int threads = 16;                     // HTTP worker threads, 2 .. 256
  std::size_t max_body_bytes = 64 * 1024;  // 256 B .. 16 MiB
  int timeout_seconds = 10;             // read/write timeout per request for slow clients, 1 .. 600
  // The post-mortem of /api/v1/verification, as verify's flags: probability
  // bins of the decomposition and diagrams (--bins, >= 2), the block length
  // of the intervals ("lag+7", N days or "auto"; --block-days), and the
  // catch rule (--catch-margin, --catch-excess, 0 .. 1).
  int reliability_bins = 10;
  std::string block_days = "lag+7";
  double catch_margin = 0.10;
  double catch_excess = 0.15;

  // Keys as above (plus "comment"); unknown keys are refused by name.
  // Throws InputError naming `src` and the key.
  static ServiceConfig from_json(const nlohmann::json& j, const std::string& src);
  // Checks required settings and ranges; throws InputError naming the
  // setting.
  void validate() const;
  std::string host() const;  // from listen; throws InputError when not ADDRESS:PORT
  int port() const;          // from listen, 0 .. 65535; throws InputError otherwise

  // The settings of every classification the service runs: reforecasts,
  // calibration, variable, lag, weights, and the observed files as the analysis (for the
  // latest observed regime). The run adds its forecasts and issue date.
  // Throws InputError for weights that do not parse.
  ClassifyConfig classify_options() const;
  // The settings of every verification the service runs: observed files,
  // variable, bins, block length and catch rule. The request adds the
  // guidance files and the period. Throws InputError as VerifyConfig does.
  VerifyConfig verify_options() const;
};

}  // namespace isohypse
