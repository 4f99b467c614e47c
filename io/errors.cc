#include "io/errors.h"

#include <fcntl.h>
#include <fmt/format.h>
#include <sys/statvfs.h>
#include <unistd.h>

#include <cerrno>
#include <cstring>

namespace roundtrip::io {

std::string write_failure_reason(int error_number, const std::string& directory) {
  // statvfs tells a read-only mount apart from missing permissions: some calls report EACCES
  // or EPERM on a read-only file system before they would report EROFS.
  struct statvfs vfs {};
  const bool read_only = ::statvfs(directory.c_str(), &vfs) == 0 && (vfs.f_flag & ST_RDONLY) != 0;
  switch (error_number) {
    case EROFS:
      return fmt::format("the file system of \"{}\" is mounted read-only", directory);
    case EACCES:
    case EPERM:
      if (read_only)
        return fmt::format("the file system of \"{}\" is mounted read-only", directory);
      return fmt::format("no permission to write in directory \"{}\"", directory);
    case ENOSPC:
      return fmt::format("no space left on device (in \"{}\")", directory);
    case EDQUOT:
      return fmt::format("disk quota exceeded (in \"{}\")", directory);
    case ENOENT:
      return fmt::format("directory \"{}\" does not exist", directory);
    case ENOTDIR:
      return fmt::format("\"{}\" is not a directory", directory);
    case EIO:
      return fmt::format("input/output error on the device of \"{}\"", directory);
    default:
      return fmt::format("{} (in \"{}\")", std::strerror(error_number), directory);
  }
}

FileWriteFailure write_file_synced(const std::filesystem::path& path, std::string_view bytes) {
  const int fd = ::open(path.c_str(), O_WRONLY | O_CREAT | O_TRUNC | O_CLOEXEC, 0644);
  if (fd < 0) return {"creating", errno};
  std::size_t done = 0;
  while (done < bytes.size()) {
    const ssize_t n = ::write(fd, bytes.data() + done, bytes.size() - done);
    if (n < 0) {
      if (errno == EINTR) continue;
      const int e = errno;
      ::close(fd);
      return {"writing", e};
    }
    done += static_cast<std::size_t>(n);
  }
  // EINVAL: the file system does not support fsync (nothing more to make durable).
  if (::fsync(fd) != 0 && errno != EINVAL) {
    const int e = errno;
    ::close(fd);
    return {"flushing (fsync)", e};
  }
  if (::close(fd) != 0 && errno != EINTR) return {"closing", errno};
  return {};
}

}  // namespace roundtrip::io
