#pragma once
// User-input errors: always-on checks at the boundary (case files, CLI, tables). The message names
// the field, the offending value and, where known, the file and line.
#include <stdexcept>
#include <string>

namespace roundtrip::io {

class CaseError : public std::runtime_error {
 public:
  using std::runtime_error::runtime_error;
};

}  // namespace roundtrip::io
