// Forecast and reforecast files: scanning their metadata, grouping them into
// initialisations, and reading members' daily heights onto the regime grid.
//
// Accepted layouts (CF): one file per initialisation with a member dimension
// (member x time x lat x lon, any order of the leading dimensions), or one
// file per member (the member number from a scalar `realization`/`number`
// variable or a global attribute `realization`/`ensemble_member`/`member`).
// The initialisation is the scalar `forecast_reference_time` if present,
// else the first time step. Valid times may be in any CF calendar; lead day
// L is the steps on the L-th day after the initialisation day (sub-daily
// steps are averaged). The date a forecast verifies on is the real-calendar
// initialisation date plus L days; the model-calendar date is kept beside it.
#pragma once

#include <armadillo>
#include <functional>
#include <string>
#include <vector>

#include <map>
#include <memory>
#include <mutex>

#include "isohypse/base/calendar.hpp"
#include "isohypse/io/dataset.hpp"
#include "isohypse/io/grib_index.hpp"
#include "isohypse/base/field.hpp"

namespace isohypse {

struct MemberSource {
  std::size_t file = 0;    // index into Initialisation::files
  std::size_t index = 0;   // index along the file's member dimension (0 if none)
  int number = 0;          // member number as labelled
  std::size_t init_index = 0;  // the initialisation in a file of several (DatasetInfo::init_times), else 0
};

struct Initialisation {
  Date init;                 // model calendar
  Date init_real;            // real (proleptic Gregorian) calendar
  std::vector<std::string> files;
  std::vector<MemberSource> members;
  int n_leads = 0;           // lead days 0..n_leads-1, all present
  // Time indices per lead day (same in every file of the initialisation).
  std::vector<std::vector<std::size_t>> lead_steps;
  // GRIB initialisations: the index of their messages, and per member
  // (MemberSource::index) its messages by lead; null and empty for NetCDF.
  std::shared_ptr<const GribIndex> grib;
  std::vector<std::vector<std::size_t>> grib_steps;
  Grid native_grid;          // the files' grid over the selection read
  Domain read_domain;        // the domain read from the files (the regime domain plus a margin when available)
  std::string id() const { return to_string(init); }
  Date valid_model(int lead) const { return add_days(init, lead); }
  Date valid_real(int lead) const { return add_days(init_real, lead); }
};

// Reads only metadata. Groups files into initialisations (sorted by date),
// checks that each has every lead day from 0 (a gap is refused, naming the
// file and the missing lead days), no duplicate members, and one grid and
// calendar. Throws InputError/DataError naming the file. The part of each
// file to read is the domain widened by a grid step (for interpolation), or
// exactly the domain when its points there are those of `target` (the
// regime grid, if given).
std::vector<Initialisation> scan_forecasts(const std::vector<std::string>& paths, const std::string& variable,
                                           const Domain& domain, const Grid* target = nullptr);

// Bilinear interpolation from one regular grid to another (weights computed
// once). A target point outside the source grid is refused (InputError
// naming `what`, usually the file, and both extents).
class Regridder {
public:
  Regridder() = default;
  Regridder(const Grid& from, const Grid& to, const std::string& what);
  bool identity() const { return identity_; }
  // n_from_points x n -> n_to_points x n
  arma::fmat apply(const arma::fmat& values) const;
  // The same into `out` (resized; its memory reused when the size holds).
  void apply_into(const arma::fmat& values, arma::fmat& out) const;

private:
  bool identity_ = true;
  bool pick_ = false;  // every target point is a source node
  arma::uvec idx_[4];
  arma::fvec w_[4];
};

// The members of several initialisations as one list that threads can
// share. read(k, raw) fetches member k's stored values: it calls netCDF-C,
// which is not thread-safe, so call it from one thread at a time. finish(k,
// work) turns them into daily heights in metres on the target grid without
// netCDF-C, on any thread; fetch() does both, holding a given lock for the
// read only. Members are listed initialisation by initialisation, file by
// file, in file order; a file is opened at its first member's read and
// closed after its last.
class EnsembleReader {
public:
  struct Slot {
    std::size_t init = 0;    // index into the initialisations given
    std::size_t member = 0;  // index into that initialisation's members
  };
  // A thread's buffers (their memory is reused member after member).
  struct Work {
    RawBlock raw;             // what read() fetched
    arma::fmat unpacked, daily;
    arma::fmat heights;       // finish(): n_target_points x n_leads (lead 0 first)
  };
  struct Times {  // seconds, added to by fetch()
    double read_s = 0, finish_s = 0;
  };

  EnsembleReader(std::vector<const Initialisation*> inits, const Regridder& to_target, std::string variable);
  ~EnsembleReader();
  std::size_t size() const { return slots_.size(); }
  const Slot& slot(std::size_t k) const { return slots_[k]; }

  void read(std::size_t k, RawBlock& raw);
  // work.raw (from read) into work.heights, inflating compressed chunks
  // (see unpack). Throws DataError naming the file, the member and the lead
  // day when a value is missing.
  void finish(std::size_t k, Work& work) const;
  // read() under `netcdf` (GRIB: without it, ecCodes decoding on any thread), then finish() outside it.
  void fetch(std::size_t k, std::mutex& netcdf, Work& work, Times* times = nullptr);

private:
  struct OpenFile;
  std::vector<const Initialisation*> inits_;
  const Regridder& to_target_;
  std::string variable_;
  std::vector<Slot> slots_;
  std::vector<char> one_step_per_day_;  // per initialisation: no averaging needed
  std::map<std::string, std::unique_ptr<OpenFile>> open_;
  std::map<std::string, std::size_t> reads_left_;
  std::vector<DomainSelection> grib_selection_;  // per initialisation read from GRIB: its part of the grid
};

// Calls use(m, heights) for every member m (an index into init.members),
// file by file, with the same daily heights as read_members. `heights` is a
// buffer that the next member overwrites: use may read it, or swap it for a
// matrix of its own (whose memory then serves the next read). One member's
// data is in memory at a time.
void for_each_member(const Initialisation& init, const Regridder& to_target, const std::string& variable,
                     const std::function<void(std::size_t, arma::fmat&)>& use);

// Every member's daily heights in metres on the target grid, in the order of
// init.members: each n_target_points x n_leads (lead 0 first). Each file is
// opened once. Throws DataError naming the file, member and lead when a
// value is missing.
std::vector<arma::fmat> read_members(const Initialisation& init, const Regridder& to_target,
                                     const std::string& variable);

}  // namespace isohypse
