#pragma once
// Files the commands write: through a temporary name and a rename, so a failure never leaves a
// file that looks complete.

#include <filesystem>
#include <fstream>
#include <string>

#include "commands.hpp"
#include "fxmimo/io/output_bytes.hpp"

namespace fxmimo::cli {

/// Writes text through a temporary file beside `path` and a rename: a reader never sees half a
/// file, and a failed run leaves an earlier file untouched.
/// In an MPI job only rank 0 writes (writes_outputs); the others return at once.
inline void write_file_atomically(const std::filesystem::path& path, const std::string& text) {
  if (!writes_outputs()) return;
  const std::filesystem::path temp = path.string() + ".partial";
  {
    std::ofstream out(temp, std::ios::binary | std::ios::trunc);
    if (!out) throw usage_error(path.string() + ": cannot write");
    io::write_output_bytes(out, text);
    if (!out) {
      out.close();
      std::filesystem::remove(temp);
      throw usage_error(path.string() + ": write failed");
    }
  }
  std::error_code ec;
  std::filesystem::rename(temp, path, ec);
  if (ec) {
    std::filesystem::remove(temp);
    throw usage_error(path.string() + ": cannot write: " + ec.message());
  }
}

}  // namespace fxmimo::cli
