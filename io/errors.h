#pragma once
// User-input errors: always-on checks at the boundary (case files, CLI, tables). The message names
// the field, the offending value and, where known, the file and line.
#include <filesystem>
#include <string>
#include <string_view>

#include "solver/input_error.h"

namespace roundtrip::io {

class CaseError : public InputError {
 public:
  using InputError::InputError;
};

/// Writing the results file or the checkpoint journal failed after the run had started (no space
/// left on device, quota, I/O error, file system turned read-only). What was on disk before is
/// kept; `error_number` is the errno of the failed call.
class StorageError : public std::runtime_error {
 public:
  StorageError(const std::string& what, int error_number)
      : std::runtime_error(what), error_number_(error_number) {}
  int error_number() const { return error_number_; }

 private:
  int error_number_;
};

/// Why a path cannot be written, from errno and the file system (statvfs): "the file system is
/// read-only", "no permission to write in directory ...", "no space left on device", ...
std::string write_failure_reason(int error_number, const std::string& directory);

/// The step of write_file_synced that failed ("creating", "writing", "flushing (fsync)",
/// "closing") and its errno; `step` is null when every step succeeded.
struct FileWriteFailure {
  const char* step = nullptr;
  int error = 0;
};
/// Create or truncate `path` (mode 0644), write() every byte (EINTR retried), fsync and close it.
/// On failure the file may be partial: callers remove it and report the step.
FileWriteFailure write_file_synced(const std::filesystem::path& path, std::string_view bytes);

}  // namespace roundtrip::io
