#include "fxmimo/vectors/manifest.hpp"

#include <fmt/core.h>

#include <nlohmann/json.hpp>

#include "fxmimo/io/checked_json.hpp"
#include "fxmimo/vectors/errors.hpp"
#include "fxmimo/vectors/sha256.hpp"

#ifndef FXMIMO_VERSION
#define FXMIMO_VERSION "unknown"
#endif

namespace fxmimo::vectors {

std::string_view library_version() { return FXMIMO_VERSION; }

std::string_view to_string(file_form form) {
  switch (form) {
    case file_form::hex: return "hex";
    case file_form::bin: return "bin";
    case file_form::npy: return "npy";
  }
  return "?";
}

std::string_view to_string(complex_layout layout) { return layout == complex_layout::split ? "split" : "interleaved"; }

std::optional<file_form> parse_file_form(std::string_view text) {
  for (file_form f : {file_form::hex, file_form::bin, file_form::npy}) {
    if (to_string(f) == text) return f;
  }
  return std::nullopt;
}

std::optional<complex_layout> parse_complex_layout(std::string_view text) {
  for (complex_layout l : {complex_layout::split, complex_layout::interleaved}) {
    if (to_string(l) == text) return l;
  }
  return std::nullopt;
}

std::string_view file_extension(file_form form) { return to_string(form); }

nlohmann::json to_json(const manifest& m) {
  nlohmann::json j;
  j["kind"] = "fxmimo vector set";
  j["schema"] = manifest_schema;
  j["tool"] = {{"name", "fxmimo"},
               {"version", m.info.tool_version.empty() ? std::string(library_version()) : m.info.tool_version}};
  j["scenario"] = {{"name", m.info.scenario_name}, {"sha256", m.scenario_sha256}, {"text", m.info.scenario_text}};
  j["seed"] = m.info.seed;
  j["trials"] = m.info.trials;
  j["form"] = std::string(to_string(m.form));
  j["complex_layout"] = std::string(to_string(m.layout));
  j["word_order"] = "row-major, last dimension fastest";
  j["files"] = nlohmann::json::array();
  for (const file_entry& f : m.files) {
    nlohmann::json e;
    e["file"] = f.file;
    e["node"] = f.node;
    e["direction"] = f.direction;
    e["port"] = f.port;
    e["part"] = f.part;
    e["format"] = fp::to_q_string(f.spec.fmt);
    e["word_bits"] = f.spec.fmt.word_bits;
    e["frac_bits"] = f.spec.fmt.frac_bits;
    e["signed"] = f.spec.fmt.is_signed;
    e["rounding"] = std::string(fp::to_string(f.spec.rounding));
    e["overflow"] = std::string(fp::to_string(f.spec.overflow));
    e["dims"] = nlohmann::json::array();
    for (std::size_t i = 0; i < f.dim_names.size(); ++i)
      e["dims"].push_back({{"name", f.dim_names[i]}, {"size", f.dim_sizes[i]}});
    e["word_count"] = f.word_count;
    e["bytes"] = f.bytes;
    e["sha256"] = f.sha256;
    if (!f.dtype.empty()) e["dtype"] = f.dtype;
    j["files"].push_back(std::move(e));
  }
  return j;
}

namespace {

bool is_safe_file_name(const std::string& name) {
  if (name.empty() || name == "." || name == ".." || name == manifest_file_name) return false;
  return name.find('/') == std::string::npos && name.find('\\') == std::string::npos && name[0] != '.';
}

}  // namespace

manifest manifest_from_json(const nlohmann::json& j, std::string_view source) {
  try {
    const io::checked_json doc(j, std::string(source));
    manifest m;
    if (doc["kind"].text() != "fxmimo vector set") doc["kind"].fail("expected \"fxmimo vector set\"");
    const io::checked_json schema = doc["schema"];
    const long long version = schema.integer(-100000, 100000);
    if (version != 1 && version != manifest_schema) {
      schema.fail(fmt::format("schema {} is not supported (this reader knows 1 to {})", version, manifest_schema));
    }
    m.info.tool_version = doc["tool"]["version"].text();
    const io::checked_json scen = doc["scenario"];
    m.info.scenario_name = scen["name"].text();
    m.info.scenario_text = scen["text"].text();
    m.scenario_sha256 = scen["sha256"].text();
    if (sha256_hex(m.info.scenario_text) != m.scenario_sha256) {
      scen["sha256"].fail("does not match the embedded scenario text");
    }
    m.info.seed = doc["seed"].count();
    const io::checked_json trials = doc["trials"];
    for (std::size_t i = 0; i < trials.size(); ++i) m.info.trials.push_back(trials[i].count());
    const io::checked_json form = doc["form"];
    const auto parsed_form = parse_file_form(form.text());
    if (!parsed_form) form.fail(fmt::format("unknown form '{}' (hex, bin, npy)", form.text()));
    m.form = *parsed_form;
    const io::checked_json layout = doc["complex_layout"];
    const auto parsed_layout = parse_complex_layout(layout.text());
    if (!parsed_layout) layout.fail(fmt::format("unknown complex_layout '{}' (split, interleaved)", layout.text()));
    m.layout = *parsed_layout;

    const io::checked_json files = doc["files"];
    for (std::size_t i = 0; i < files.size(); ++i) {
      const io::checked_json e = files[i];
      file_entry f;
      f.file = e["file"].text();
      if (!is_safe_file_name(f.file)) e["file"].fail("must be a plain file name inside the set directory");
      f.node = e["node"].text();
      f.direction = e["direction"].text();
      f.port = e["port"].text();
      f.part = e["part"].text();
      if (f.part != "real" && f.part != "re" && f.part != "im" && f.part != "re_im") {
        e["part"].fail(fmt::format("part '{}' is not real, re, im or re_im", f.part));
      }
      f.spec.fmt = e.format_fields();
      try {
        fp::validate(f.spec.fmt);
      } catch (const fp::format_error& ex) {
        e["format"].fail(ex.what());
      }
      const auto rm = fp::parse_rounding_mode(e["rounding"].text());
      const auto om = fp::parse_overflow_mode(e["overflow"].text());
      if (!rm) e["rounding"].fail(fmt::format("unknown rounding '{}'", e["rounding"].text()));
      if (!om) e["overflow"].fail(fmt::format("unknown overflow '{}'", e["overflow"].text()));
      f.spec.rounding = *rm;
      f.spec.overflow = *om;
      const io::checked_json dims = e["dims"];
      for (std::size_t d = 0; d < dims.size(); ++d) {
        f.dim_names.push_back(dims[d]["name"].text());
        f.dim_sizes.push_back(static_cast<std::size_t>(dims[d]["size"].count()));
      }
      if (version == 1 && f.part == "re_im") {  // version 1 left the part axis out
        f.dim_names.emplace_back("part");
        f.dim_sizes.push_back(2);
      }
      if (f.part == "re_im" && (f.dim_names.empty() || f.dim_names.back() != "part" || f.dim_sizes.back() != 2)) {
        e["dims"].fail("an interleaved file's dims end with {\"name\": \"part\", \"size\": 2}");
      }
      f.word_count = static_cast<std::size_t>(e["word_count"].count());
      std::size_t product = 1;
      for (const std::size_t d : f.dim_sizes) product *= d;
      if (f.word_count != product) {
        e["word_count"].fail(fmt::format("{} is not the product of the dims ({})", f.word_count, product));
      }
      f.bytes = e["bytes"].count();
      f.sha256 = e["sha256"].text();
      if (const auto dtype = e.find("dtype")) f.dtype = dtype->text();
      m.files.push_back(std::move(f));
    }
    return m;
  } catch (const io::json_error& e) {
    throw vector_error(e.what());
  }
}

}  // namespace fxmimo::vectors
