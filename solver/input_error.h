#pragma once
// Errors in data the user supplied that the solver itself reads (optical tables), so that solver/
// depends on nothing in io/. The message names the file, the line and what is wrong; io/ turns it
// into a CaseError naming the case-file key as well (io/errors.h derives from it).
#include <stdexcept>

namespace roundtrip {

class InputError : public std::runtime_error {
 public:
  using std::runtime_error::runtime_error;
};

}  // namespace roundtrip
