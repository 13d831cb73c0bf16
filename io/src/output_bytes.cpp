#include "fxmimo/io/output_bytes.hpp"

#include <algorithm>
#include <chrono>
#include <cstdlib>
#include <thread>

namespace fxmimo::io {

void write_output_bytes(std::ostream& out, std::string_view bytes) {
  static const int pause_ms = [] {
    const char* value = std::getenv("FXMIMO_TEST_SLOW_WRITES");
    return value == nullptr ? 0 : std::max(1, std::atoi(value));
  }();
  if (pause_ms == 0) {
    out.write(bytes.data(), static_cast<std::streamsize>(bytes.size()));
    out.flush();
    return;
  }
  constexpr std::size_t pieces = 8;
  const std::size_t piece = (bytes.size() + pieces - 1) / pieces;
  for (std::size_t at = 0; at < bytes.size() && out; at += piece) {
    const std::string_view part = bytes.substr(at, piece);
    out.write(part.data(), static_cast<std::streamsize>(part.size()));
    out.flush();
    std::this_thread::sleep_for(std::chrono::milliseconds(pause_ms));
  }
}

}  // namespace fxmimo::io
