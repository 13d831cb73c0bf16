#pragma once
// A scenario file read and parsed once; the golden model's sections and the datapath's [nodes]
// tables are read from that one document.

#include <string>

#include "fxmimo/datapath/config.hpp"
#include "fxmimo/golden/checked_table.hpp"
#include "fxmimo/golden/scenario.hpp"

namespace fxmimo::cli {

struct scenario_input {
  golden::scenario_document doc;  ///< the text and its TOML tables (for key lines)
  golden::scenario scen;
  datapath::datapath_config config;
  /// The trial count a command uses: the one given (> 0) or the scenario's own.
  [[nodiscard]] int trials_or_default(int given) const { return given > 0 ? given : scen.num_trials; }
  [[nodiscard]] const std::string& text() const { return doc.text; }
  /// "FILE:LINE: KEY" of a dotted key (the line of its table when the key is absent).
  [[nodiscard]] std::string key_location(std::string_view dotted_key) const;
};

/// Reads and parses `path`; errors (scenario_error, unreadable file) name the file.
scenario_input load_scenario_input(const std::string& path);
/// Parses text given under a name (the embedded demo scenario).
scenario_input parse_scenario_input(std::string text, const std::string& source_name);

/// The embedded demo scenario (examples/pier-64-uplink.toml at build time).
const char* demo_scenario_text();

}  // namespace fxmimo::cli
