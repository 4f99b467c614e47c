#pragma once
// User-input errors: always-on checks at the boundary (case files, CLI, tables). The message names
// the field, the offending value and, where known, the file and line.
#include <string>

#include "solver/input_error.h"

namespace roundtrip::io {

class CaseError : public InputError {
 public:
  using InputError::InputError;
};

}  // namespace roundtrip::io
