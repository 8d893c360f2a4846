// Errors: the kinds every stage throws. Messages name the file (or
// setting), the variable or dimension, and the expected against the found.
// They are caught only at the boundaries: the CLI maps them to exit codes,
// the HTTP service to a status and a JSON error body.
#pragma once

#include <stdexcept>
#include <string>

namespace isohypse {

// Base of every isohypse error.
class Error : public std::runtime_error {
public:
  using std::runtime_error::runtime_error;
};

// The user gave something unusable: a missing file, a config typo, a flag
// value out of range, a domain the grid does not cover. CLI exit code 2.
class InputError : public Error {
public:
  using Error::Error;
};

// A file was read but its contents are wrong: a truncated file, no height
// variable, wrong units, all values missing. CLI exit code 3.
class DataError : public Error {
public:
  using Error::Error;
};

// A computation failed: a singular fit, an eigen-solver that did not
// converge, too few days for the requested EOFs. CLI exit code 4.
class NumericalError : public Error {
public:
  using Error::Error;
};

// A broken precondition inside the library (sizes that do not match between
// two of its own steps, an index out of range): a bug, never the user's
// input. CLI exit code 5, HTTP 500.
class InternalError : public Error {
public:
  using Error::Error;
};

}  // namespace isohypse
