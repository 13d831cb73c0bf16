#include "fxmimo/analysis/resources.hpp"

#include <fmt/core.h>

#include <algorithm>
#include <array>
#include <atomic>
#include <cctype>
#include <charconv>
#include <cmath>
#include <fstream>
#include <sstream>
#include <utility>

#include "fxmimo/golden/trial.hpp"

namespace fxmimo::analysis {

namespace {

constexpr double complex_bytes = 16.0;  // std::complex<double>, and a pair of int64 words

struct dims {
  double m, k, l, tau, n, terms;
};

dims dims_of(const golden::scenario& scen) {
  // Terms: the K x K matrices an iterative inverse keeps side by side (Neumann terms, Gauss-Seidel
  // sweeps), each also a K^3 product or sweep.
  const bool inverts = scen.precoder.kind != golden::precoder_kind::mf;
  double terms = 1.0;
  if (inverts && scen.precoder.inversion == golden::inversion_kind::neumann)
    terms = static_cast<double>(scen.precoder.neumann_terms);
  if (inverts && scen.precoder.inversion == golden::inversion_kind::gauss_seidel)
    terms = static_cast<double>(scen.precoder.gauss_seidel_sweeps);
  return {static_cast<double>(scen.array.num_antennas), static_cast<double>(scen.cells.num_users),
          static_cast<double>(scen.cells.num_cells),    static_cast<double>(scen.pilots.length),
          static_cast<double>(scen.data.num_symbols),   terms};
}

/// The largest of named terms, and their sum.
template <std::size_t N>
resource_estimate sum_of(const std::array<std::pair<double, const char*>, N>& terms) {
  resource_estimate out;
  double largest = -1.0;
  for (const auto& [value, key] : terms) {
    out.amount += value;
    if (value > largest) {
      largest = value;
      out.key = key;
    }
  }
  return out;
}

std::optional<double> read_number_file(const char* path) {
  std::ifstream in(path);
  std::string word;
  if (!(in >> word) || word == "max") return std::nullopt;
  double v = 0.0;
  const auto [end, ec] = std::from_chars(word.data(), word.data() + word.size(), v);
  if (ec != std::errc() || end != word.data() + word.size()) return std::nullopt;
  return v;
}

std::atomic<int> requested_signal{0};
static_assert(std::atomic<int>::is_always_lock_free, "request_stop must be async-signal-safe");

}  // namespace

resource_estimate trial_memory_bytes(const golden::scenario& scen) {
  const dims d = dims_of(scen);
  // The data phase streams in blocks of golden::symbol_block_size symbols, so only one block is
  // held: antennas x block: cell 0's golden block, the fixed accumulator and DAC words, the DAC
  // values and the golden views the errors are taken on. Users x block: labels and symbols of
  // every cell, cell 0's symbol words, received samples. Users x users x cells: the cross gains.
  // Antennas x users: every cell's channels (drawn and kept), precoders, estimate, weights.
  // Antennas x pilot symbols: received pilots, ADC values and words.
  // Users x users: Gram, factor, inverse (golden and words), Neumann terms.
  const double block = std::min(d.n, static_cast<double>(golden::symbol_block_size));
  return sum_of<5>({{
      {complex_bytes * d.m * block * 6.0, "data.symbols"},
      {complex_bytes * d.k * block * (d.l + 6.0), "data.symbols"},
      {complex_bytes * d.m * d.k * (3.0 * d.l + 8.0), "cells.users_per_cell"},
      {complex_bytes * d.m * d.tau * (d.l + 4.0), "pilots.length"},
      {complex_bytes * d.k * d.k * (10.0 + 2.0 * d.terms + d.l), "cells.users_per_cell"},
  }});
}

double trial_word_bytes(const golden::scenario& scen) {
  const dims d = dims_of(scen);
  // tx_acc and dac; symbols; adc, pilot_rom; pilot_acc, chan_est, precoder, weights; gram, the
  // inverse's factors and Neumann terms.
  return complex_bytes *
         (2.0 * d.m * d.n + d.k * d.n + d.m * d.tau + d.k * d.tau + 4.0 * d.m * d.k + d.k * d.k * (4.0 + d.terms));
}

resource_estimate trial_work_macs(const golden::scenario& scen) {
  const dims d = dims_of(scen);
  // Every cell's golden chain and cell 0's datapath: (l + 1) chains.
  const double chains = d.l + 1.0;
  return sum_of<4>({{
      {chains * d.m * d.k * d.n, "data.symbols"},
      {chains * d.m * d.k * d.tau * d.l, "pilots.length"},
      {chains * d.m * d.k * d.k, "cells.users_per_cell"},
      {chains * d.k * d.k * d.k * d.terms, "cells.users_per_cell"},
  }});
}

std::optional<double> available_memory_bytes() {
  std::optional<double> out;
  std::ifstream meminfo("/proc/meminfo");
  std::string line;
  while (std::getline(meminfo, line)) {
    std::istringstream fields(line);
    std::string name;
    double kib = 0.0;
    if (fields >> name >> kib && name == "MemAvailable:") {
      out = kib * 1024.0;
      break;
    }
  }
  const std::optional<double> limit = read_number_file("/sys/fs/cgroup/memory.max");
  const std::optional<double> used = read_number_file("/sys/fs/cgroup/memory.current");
  if (limit && used) {
    const double left = std::max(0.0, *limit - *used);
    out = out ? std::min(*out, left) : left;
  }
  return out;
}

std::string bytes_text(double bytes) {
  static constexpr std::array<const char*, 5> units{"B", "KiB", "MiB", "GiB", "TiB"};
  std::size_t u = 0;
  while (u + 1 < units.size() && bytes >= 1024.0) {
    bytes /= 1024.0;
    ++u;
  }
  if (u == 0) return fmt::format("{:.0f} B", bytes);
  return fmt::format("{:.{}f} {}", bytes, bytes < 10.0 ? 1 : 0, units[u]);
}

std::optional<double> parse_bytes(std::string_view text) {
  double value = 0.0;
  const auto [end, ec] = std::from_chars(text.data(), text.data() + text.size(), value);
  if (ec != std::errc() || end == text.data() || !std::isfinite(value) || value <= 0.0) return std::nullopt;
  std::string unit(end, text.data() + text.size());
  for (char& ch : unit) ch = static_cast<char>(std::toupper(static_cast<unsigned char>(ch)));
  static constexpr std::array<std::pair<const char*, double>, 14> units{{{"", 1.0},
                                                                         {"B", 1.0},
                                                                         {"K", 0x1p10},
                                                                         {"KB", 0x1p10},
                                                                         {"KIB", 0x1p10},
                                                                         {"M", 0x1p20},
                                                                         {"MB", 0x1p20},
                                                                         {"MIB", 0x1p20},
                                                                         {"G", 0x1p30},
                                                                         {"GB", 0x1p30},
                                                                         {"GIB", 0x1p30},
                                                                         {"T", 0x1p40},
                                                                         {"TB", 0x1p40},
                                                                         {"TIB", 0x1p40}}};
  for (const auto& [name, scale] : units) {
    if (unit == name) return value * scale;
  }
  return std::nullopt;
}

stop_requested::stop_requested(int signal_number)
    : std::runtime_error(fmt::format("stopped by signal {}", signal_number)), signal(signal_number) {}

void request_stop(int signal_number) noexcept { requested_signal.store(signal_number); }

int stop_signal() noexcept { return requested_signal.load(); }

void throw_if_stop_requested() {
  if (const int s = stop_signal(); s != 0) throw stop_requested(s);
}

}  // namespace fxmimo::analysis
