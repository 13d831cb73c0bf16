// Fuzz target: scenario TOML text through the same sequence as the program (app/src/scenario_input.cpp):
// the document, then golden's sections and the datapath's [nodes] tables from it. A bad file is a
// golden::scenario_error; anything else escapes to the fuzzer.
#include <cstddef>
#include <cstdint>
#include <string>

#include "fxmimo/datapath/config.hpp"
#include "fxmimo/golden/checked_table.hpp"

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
  namespace golden = fxmimo::golden;
  std::string text(reinterpret_cast<const char*>(data), size);
  try {
    const golden::scenario_document doc = golden::parse_scenario_document(std::move(text), "fuzz.toml");
    (void)golden::parse_scenario(doc);
    (void)fxmimo::datapath::parse_datapath_config(doc);
  } catch (const golden::scenario_error&) {
    // the documented error of a bad scenario file
  }
  return 0;
}
