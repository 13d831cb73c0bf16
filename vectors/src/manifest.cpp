#include "fxmimo/vectors/manifest.hpp"

#include <fmt/core.h>

#include <nlohmann/json.hpp>

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

class field_reader {
 public:
  explicit field_reader(std::string_view source) : source_(source) {}

  [[noreturn]] void fail(const std::string& where, const std::string& what) const {
    throw vector_error(fmt::format("{}: {}: {}", source_, where, what));
  }

  const nlohmann::json& get(const nlohmann::json& obj, const char* key, const std::string& where) const {
    if (!obj.is_object()) fail(where, "expected an object");
    const auto it = obj.find(key);
    if (it == obj.end()) fail(where, fmt::format("missing field '{}'", key));
    return *it;
  }
  std::string str(const nlohmann::json& obj, const char* key, const std::string& where) const {
    const auto& v = get(obj, key, where);
    if (!v.is_string()) fail(where, fmt::format("field '{}' must be a string", key));
    return v.get<std::string>();
  }
  std::uint64_t uint(const nlohmann::json& obj, const char* key, const std::string& where) const {
    const auto& v = get(obj, key, where);
    if (!v.is_number_unsigned() && !(v.is_number_integer() && v.get<std::int64_t>() >= 0)) {
      fail(where, fmt::format("field '{}' must be a non-negative integer", key));
    }
    return v.get<std::uint64_t>();
  }
  int integer(const nlohmann::json& obj, const char* key, const std::string& where) const {
    const auto& v = get(obj, key, where);
    if (!v.is_number_integer()) fail(where, fmt::format("field '{}' must be an integer", key));
    const auto x = v.get<std::int64_t>();
    if (x < -100000 || x > 100000) fail(where, fmt::format("field '{}' out of range", key));
    return static_cast<int>(x);
  }
  bool boolean(const nlohmann::json& obj, const char* key, const std::string& where) const {
    const auto& v = get(obj, key, where);
    if (!v.is_boolean()) fail(where, fmt::format("field '{}' must be true or false", key));
    return v.get<bool>();
  }

 private:
  std::string_view source_;
};

bool is_safe_file_name(const std::string& name) {
  if (name.empty() || name == "." || name == ".." || name == manifest_file_name) return false;
  return name.find('/') == std::string::npos && name.find('\\') == std::string::npos && name[0] != '.';
}

}  // namespace

manifest manifest_from_json(const nlohmann::json& j, std::string_view source) {
  const field_reader r(source);
  manifest m;
  if (r.str(j, "kind", "top level") != "fxmimo vector set") r.fail("top level", "kind is not \"fxmimo vector set\"");
  const int schema = r.integer(j, "schema", "top level");
  if (schema != manifest_schema)
    r.fail("top level", fmt::format("schema {} is not supported (this reader knows {})", schema, manifest_schema));
  m.info.tool_version = r.str(r.get(j, "tool", "top level"), "version", "tool");
  const auto& scen = r.get(j, "scenario", "top level");
  m.info.scenario_name = r.str(scen, "name", "scenario");
  m.info.scenario_text = r.str(scen, "text", "scenario");
  m.scenario_sha256 = r.str(scen, "sha256", "scenario");
  if (sha256_hex(m.info.scenario_text) != m.scenario_sha256) {
    r.fail("scenario", "sha256 does not match the embedded scenario text");
  }
  m.info.seed = r.uint(j, "seed", "top level");
  const auto& trials = r.get(j, "trials", "top level");
  if (!trials.is_array()) r.fail("top level", "field 'trials' must be an array");
  for (const auto& t : trials) {
    if (!t.is_number_unsigned()) r.fail("trials", "trial indices must be non-negative integers");
    m.info.trials.push_back(t.get<std::uint64_t>());
  }
  const std::string form_text = r.str(j, "form", "top level");
  const auto form = parse_file_form(form_text);
  if (!form) r.fail("top level", fmt::format("unknown form '{}' (hex, bin, npy)", form_text));
  m.form = *form;
  const std::string layout_text = r.str(j, "complex_layout", "top level");
  const auto layout = parse_complex_layout(layout_text);
  if (!layout) r.fail("top level", fmt::format("unknown complex_layout '{}' (split, interleaved)", layout_text));
  m.layout = *layout;

  const auto& files = r.get(j, "files", "top level");
  if (!files.is_array()) r.fail("top level", "field 'files' must be an array");
  for (std::size_t i = 0; i < files.size(); ++i) {
    const auto& e = files[i];
    file_entry f;
    std::string where = fmt::format("files[{}]", i);
    f.file = r.str(e, "file", where);
    where += " (" + f.file + ")";
    if (!is_safe_file_name(f.file)) r.fail(where, "file name must be a plain name inside the set directory");
    f.node = r.str(e, "node", where);
    f.direction = r.str(e, "direction", where);
    f.port = r.str(e, "port", where);
    f.part = r.str(e, "part", where);
    if (f.part != "real" && f.part != "re" && f.part != "im" && f.part != "re_im") {
      r.fail(where, fmt::format("part '{}' is not real, re, im or re_im", f.part));
    }
    const std::string q = r.str(e, "format", where);
    f.spec.fmt.word_bits = r.integer(e, "word_bits", where);
    f.spec.fmt.frac_bits = r.integer(e, "frac_bits", where);
    f.spec.fmt.is_signed = r.boolean(e, "signed", where);
    try {
      fp::validate(f.spec.fmt);
      if (fp::parse_format(q) != f.spec.fmt) {
        r.fail(where, fmt::format("format '{}' disagrees with word_bits {}, frac_bits {}, signed {}", q,
                                  f.spec.fmt.word_bits, f.spec.fmt.frac_bits, f.spec.fmt.is_signed));
      }
    } catch (const fp::format_error& ex) {
      r.fail(where, ex.what());
    }
    const std::string rnd = r.str(e, "rounding", where);
    const std::string ovf = r.str(e, "overflow", where);
    const auto rm = fp::parse_rounding_mode(rnd);
    const auto om = fp::parse_overflow_mode(ovf);
    if (!rm) r.fail(where, fmt::format("unknown rounding '{}'", rnd));
    if (!om) r.fail(where, fmt::format("unknown overflow '{}'", ovf));
    f.spec.rounding = *rm;
    f.spec.overflow = *om;
    const auto& dims = r.get(e, "dims", where);
    if (!dims.is_array()) r.fail(where, "field 'dims' must be an array");
    for (const auto& d : dims) {
      f.dim_names.push_back(r.str(d, "name", where + " dims"));
      f.dim_sizes.push_back(static_cast<std::size_t>(r.uint(d, "size", where + " dims")));
    }
    f.word_count = static_cast<std::size_t>(r.uint(e, "word_count", where));
    f.bytes = r.uint(e, "bytes", where);
    f.sha256 = r.str(e, "sha256", where);
    if (e.contains("dtype")) f.dtype = r.str(e, "dtype", where);
    m.files.push_back(std::move(f));
  }
  return m;
}

}  // namespace fxmimo::vectors
