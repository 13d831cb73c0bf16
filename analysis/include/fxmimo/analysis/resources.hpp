#pragma once
/// What a command will ask of the machine, before it starts: the peak memory of one trial, the
/// work of one trial, the memory the machine has; and the stop a user asks for with SIGINT or
/// SIGTERM, which the trial loops honour between trials.

#include <cstdint>
#include <optional>
#include <stdexcept>
#include <string>
#include <string_view>

#include "fxmimo/golden/scenario.hpp"

namespace fxmimo::analysis {

/// An estimate with the scenario key whose value drives its largest term (e.g. "data.symbols").
struct resource_estimate {
  double amount = 0.0;
  std::string key;
};

/// Peak bytes one trial of the golden model and the bit-true datapath holds at once: the sum of
/// the large matrices both keep (README "Robustness" lists the terms). An estimate, not a bound:
/// tests/analysis/resources_test.cpp holds it within a factor of two of the measured peak.
resource_estimate trial_memory_bytes(const golden::scenario& scen);

/// Bytes of one trial's node words (every node of cell 0's datapath, 16 bytes per complex word):
/// what `vectors` keeps per trial until it writes the set.
double trial_word_bytes(const golden::scenario& scen);

/// Complex multiply-accumulates of one trial (golden model of every cell plus the datapath of
/// cell 0): pilot correlation, Gram, inversion, precoder, precoding of the data block.
resource_estimate trial_work_macs(const golden::scenario& scen);

/// Memory this process may still use: the smaller of MemAvailable (/proc/meminfo) and what the
/// cgroup limit (memory.max) leaves; nullopt when neither can be read.
std::optional<double> available_memory_bytes();

/// "1.5 GiB", "640 MiB", "12 KiB", "800 B".
std::string bytes_text(double bytes);
/// "24G", "512M", "1.5GiB", "2048" (bytes; K, M, G, T are powers of 1024, with an optional "iB"
/// or "B"); nullopt for anything else or a value that is not positive.
std::optional<double> parse_bytes(std::string_view text);

/// Thrown by the trial loops after a stop was requested.
class stop_requested : public std::runtime_error {
 public:
  explicit stop_requested(int signal_number);
  int signal;
};

/// Asks every trial loop to stop before its next trial. Async-signal-safe (a lock-free atomic).
void request_stop(int signal_number) noexcept;
/// The signal of the stop requested, 0 when none.
int stop_signal() noexcept;
/// Throws stop_requested when a stop was requested.
void throw_if_stop_requested();

}  // namespace fxmimo::analysis
