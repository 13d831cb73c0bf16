#include "fxmimo/vectors/vector_set.hpp"

#include <fmt/core.h>
#include <unistd.h>

#include <algorithm>
#include <fstream>
#include <map>
#include <nlohmann/json.hpp>
#include <set>
#include <system_error>
#include <tuple>

#include "fxmimo/io/checked_json.hpp"
#include "fxmimo/io/output_bytes.hpp"
#include "fxmimo/vectors/errors.hpp"
#include "fxmimo/vectors/hex_file.hpp"
#include "fxmimo/vectors/npy_file.hpp"
#include "fxmimo/vectors/sha256.hpp"

namespace fxmimo::vectors {

namespace fs = std::filesystem;

std::string file_name_for(const node_words& record, std::string_view part, file_form form) {
  std::string name = record.node + "." + record.direction;
  if (!record.port.empty() && record.port != record.node) name += "." + record.port;
  if (part != "real" && part != "re_im") name += "." + std::string(part);
  name += ".";
  name += file_extension(form);
  return name;
}

namespace {

/// The words of one part of a record, in file order.
std::vector<std::int64_t> part_words(const node_words& record, std::string_view part) {
  if (part == "im") return record.im;
  if (part != "re_im") return record.re;
  std::vector<std::int64_t> both;
  both.reserve(2 * record.re.size());
  for (std::size_t i = 0; i < record.re.size(); ++i) {
    both.push_back(record.re[i]);
    both.push_back(record.im[i]);
  }
  return both;
}

std::string file_bytes(const node_words& record, std::string_view part, file_form form) {
  const std::vector<std::int64_t> words = part_words(record, part);
  switch (form) {
    case file_form::hex: return format_word_lines(words, record.spec.fmt, word_radix::hex);
    case file_form::bin: return format_word_lines(words, record.spec.fmt, word_radix::bin);
    case file_form::npy: {
      std::vector<std::size_t> shape = record.dim_sizes;
      if (part == "re_im") shape.push_back(2);
      return format_npy(words, shape, npy_item_bytes(record.spec.fmt));
    }
  }
  return {};
}

/// A name the marker may hold: a file directly in the set's directory.
bool is_plain_file_name(const std::string& name) {
  return !name.empty() && name != "." && name != ".." && name.find('/') == std::string::npos;
}

/// Files this process put in place or is writing; removed again unless commit() is called.
class write_transaction {
 public:
  explicit write_transaction(fs::path dir) : dir_(std::move(dir)) {}
  write_transaction(const write_transaction&) = delete;
  write_transaction& operator=(const write_transaction&) = delete;
  ~write_transaction() {
    if (committed_) return;
    std::error_code ec;
    for (const fs::path& p : created_) fs::remove(p, ec);
  }

  /// Writes bytes to a hidden temporary beside `name`, then renames it to `name`.
  void put(const std::string& name, const std::string& bytes) {
    const fs::path final_path = dir_ / name;
    const fs::path temp_path = dir_ / fmt::format(".{}.partial-{}", name, static_cast<long>(::getpid()));
    created_.push_back(temp_path);
    {
      std::ofstream out(temp_path, std::ios::binary | std::ios::trunc);
      if (!out) throw vector_error("cannot create " + temp_path.string());
      io::write_output_bytes(out, bytes);
      if (!out) throw vector_error("error writing " + temp_path.string() + " (disk full?)");
    }
    std::error_code ec;
    fs::rename(temp_path, final_path, ec);
    if (ec)
      throw vector_error(
          fmt::format("cannot rename {} to {}: {}", temp_path.string(), final_path.string(), ec.message()));
    created_.back() = final_path;
  }

  void commit() { committed_ = true; }

 private:
  fs::path dir_;
  std::vector<fs::path> created_;
  bool committed_ = false;
};

}  // namespace

manifest write_vector_set(const fs::path& dir, const manifest_info& info, const std::vector<node_words>& records,
                          file_form form, complex_layout layout) {
  // Everything that can be checked is checked before the first byte is written.
  std::set<std::tuple<std::string, std::string, std::string>> keys;
  for (const node_words& r : records) {
    validate(r);
    if (!keys.emplace(r.node, r.direction, r.port_name()).second) {
      throw vector_error(fmt::format("record {} appears twice", record_label(r)));
    }
  }

  manifest man;
  man.info = info;
  if (man.info.tool_version.empty()) man.info.tool_version = std::string(library_version());
  man.scenario_sha256 = sha256_hex(info.scenario_text);
  man.form = form;
  man.layout = layout;

  struct pending {
    std::string name;
    std::string bytes;
  };
  std::vector<pending> files;
  std::set<std::string> names;
  for (const node_words& r : records) {
    std::vector<std::string> parts;
    if (!r.is_complex)
      parts = {"real"};
    else if (layout == complex_layout::split)
      parts = {"re", "im"};
    else
      parts = {"re_im"};
    for (const std::string& part : parts) {
      file_entry e;
      e.file = file_name_for(r, part, form);
      if (!names.insert(e.file).second) throw vector_error(fmt::format("two records map to the file name {}", e.file));
      e.node = r.node;
      e.direction = r.direction;
      e.port = r.port_name();
      e.part = part;
      e.spec = r.spec;
      e.dim_names = r.dim_names;
      e.dim_sizes = r.dim_sizes;
      if (part == "re_im") {  // the innermost position is the part: re, im, re, im, ...
        e.dim_names.emplace_back("part");
        e.dim_sizes.push_back(2);
      }
      e.word_count = part == "re_im" ? 2 * r.num_elements() : r.num_elements();
      if (form == file_form::npy) e.dtype = npy_descr(npy_item_bytes(r.spec.fmt));
      std::string bytes = file_bytes(r, part, form);
      e.bytes = bytes.size();
      e.sha256 = sha256_hex(bytes);
      man.files.push_back(std::move(e));
      files.push_back({man.files.back().file, std::move(bytes)});
    }
  }
  const std::string manifest_text = to_json(man).dump(2) + "\n";

  // The directory: absent, empty, an earlier set, or a set whose rewrite was cut short (a kill):
  // the hidden marker names every file such a rewrite may have put there.
  std::error_code ec;
  fs::create_directories(dir, ec);
  if (ec) throw vector_error(fmt::format("cannot create directory {}: {}", dir.string(), ec.message()));
  const fs::path manifest_path = dir / manifest_file_name;
  const fs::path marker_path = dir / rewrite_marker_name;
  std::set<std::string> old_files;
  if (fs::exists(marker_path)) {
    const nlohmann::json marker = nlohmann::json::parse(read_file_bytes(marker_path), nullptr, false);
    if (!marker.is_array() || !std::all_of(marker.begin(), marker.end(), [](const auto& n) {
          return n.is_string() && is_plain_file_name(n.template get<std::string>());
        })) {
      throw vector_error(
          fmt::format("{} is not a list of file names; refusing to write in {}", marker_path.string(), dir.string()));
    }
    for (const auto& n : marker) old_files.insert(n.get<std::string>());
  }
  if (fs::exists(manifest_path)) {
    try {
      const manifest old =
          manifest_from_json(nlohmann::json::parse(read_file_bytes(manifest_path)), manifest_path.string());
      for (const file_entry& f : old.files) old_files.insert(f.file);
    } catch (const std::exception& e) {
      throw vector_error(fmt::format("{} holds a manifest this writer cannot read, refusing to overwrite: {}",
                                     dir.string(), e.what()));
    }
  } else if (!fs::exists(marker_path) && !fs::is_empty(dir, ec)) {
    throw vector_error(
        fmt::format("{} is neither empty nor a vector set (no manifest.json); refusing to write there", dir.string()));
  }
  // The marker first (every old and new name), then the old manifest goes: from here on the set
  // is incomplete and a reader never sees old and new files mixed.
  std::set<std::string> touched = old_files;
  touched.insert(names.begin(), names.end());
  {
    write_transaction marker(dir);
    marker.put(std::string(rewrite_marker_name), nlohmann::json(touched).dump() + "\n");
    marker.commit();
  }
  fs::remove(manifest_path, ec);
  if (ec) throw vector_error(fmt::format("cannot remove {}: {}", manifest_path.string(), ec.message()));

  write_transaction tx(dir);
  for (const pending& p : files) tx.put(p.name, p.bytes);
  tx.put(std::string(manifest_file_name), manifest_text);
  tx.commit();
  for (const std::string& old : old_files) {
    if (names.count(old) == 0) fs::remove(dir / old, ec);
  }
  // Temporaries of writers that were killed: hidden ".NAME.partial-PID" of a name of this set,
  // of the manifest or of the marker.
  const auto is_ours = [&](const std::string& name) {
    return touched.count(name) > 0 || name == manifest_file_name || name == rewrite_marker_name;
  };
  for (const auto& entry : fs::directory_iterator(dir, ec)) {
    const std::string name = entry.path().filename().string();
    const auto tail = name.rfind(".partial-");
    if (name.size() > 1 && name[0] == '.' && tail != std::string::npos && is_ours(name.substr(1, tail - 1))) {
      fs::remove(entry.path(), ec);
    }
  }
  fs::remove(marker_path, ec);
  return man;
}

const node_words* vector_set::find(std::string_view node, std::string_view direction, std::string_view port) const {
  const node_words* found = nullptr;
  std::vector<std::string> ports;
  for (const node_words& r : records) {
    if (r.node != node || r.direction != direction) continue;
    if (!port.empty()) {
      if (r.port_name() == port) return &r;
      continue;
    }
    ports.push_back(r.port_name());
    found = &r;
  }
  if (ports.size() > 1) {
    std::string list;
    for (const std::string& p : ports) list += (list.empty() ? "" : ", ") + p;
    throw vector_error(
        fmt::format("node {} has {} '{}' records (ports {}); name the port", node, ports.size(), direction, list));
  }
  return found;
}

std::vector<const file_entry*> vector_set::files_of(const node_words& record) const {
  std::vector<const file_entry*> out;
  for (const file_entry& f : man.files) {
    if (f.node == record.node && f.direction == record.direction && f.port == record.port_name()) out.push_back(&f);
  }
  return out;
}

namespace {

/// A file's dims as its record has them: an interleaved file's last axis (the part) left out.
std::pair<std::vector<std::string>, std::vector<std::size_t>> record_dims(const file_entry& f) {
  auto names = f.dim_names;
  auto sizes = f.dim_sizes;
  if (f.part == "re_im") {
    names.pop_back();
    sizes.pop_back();
  }
  return {names, sizes};
}

}  // namespace

vector_set read_vector_set(const fs::path& dir) {
  vector_set set;
  set.dir = dir;
  const fs::path manifest_path = dir / manifest_file_name;
  if (!fs::exists(manifest_path)) {
    throw vector_error(fmt::format("{} is not a complete vector set: no {} (never written, or the writing run failed)",
                                   dir.string(), manifest_file_name));
  }
  nlohmann::json j;
  try {
    j = io::read_json_file(manifest_path);
  } catch (const io::json_error& e) {
    throw vector_error(e.what());
  }
  set.man = manifest_from_json(j, manifest_path.string());

  std::map<std::tuple<std::string, std::string, std::string>, std::size_t> index;
  for (const file_entry& f : set.man.files) {
    const fs::path path = dir / f.file;
    const std::string bytes = read_file_bytes(path);
    if (bytes.size() != f.bytes) {
      throw vector_error(fmt::format("{}: {} bytes, the manifest says {} (truncated or replaced?)", path.string(),
                                     bytes.size(), f.bytes));
    }
    if (sha256_hex(bytes) != f.sha256) {
      throw vector_error(
          fmt::format("{}: SHA-256 differs from the manifest (the file changed after writing)", path.string()));
    }
    std::vector<std::int64_t> words;
    switch (set.man.form) {
      case file_form::hex:
      case file_form::bin:
        words = parse_word_lines(bytes, f.spec.fmt, set.man.form == file_form::hex ? word_radix::hex : word_radix::bin,
                                 f.word_count, path.string());
        break;
      case file_form::npy: {
        npy_array a = parse_npy(bytes, path.string());
        const std::vector<std::size_t>& shape = f.dim_sizes;
        const std::string want = npy_descr(npy_item_bytes(f.spec.fmt));
        if (a.descr != want)
          throw vector_error(fmt::format("{}: dtype '{}', expected '{}' for {}", path.string(), a.descr, want,
                                         fp::describe(f.spec.fmt)));
        if (a.shape != shape)
          throw vector_error(fmt::format("{}: shape differs from the manifest's dims", path.string()));
        words = std::move(a.values);
        break;
      }
    }
    if (words.size() != f.word_count) {
      throw vector_error(fmt::format("{}: {} words, the manifest says {}", path.string(), words.size(), f.word_count));
    }

    const auto key = std::make_tuple(f.node, f.direction, f.port);
    auto it = index.find(key);
    if (it == index.end()) {
      node_words r;
      r.node = f.node;
      r.direction = f.direction;
      r.port = f.port == f.node ? std::string() : f.port;
      r.spec = f.spec;
      r.dim_names = record_dims(f).first;
      r.dim_sizes = record_dims(f).second;
      r.is_complex = f.part != "real";
      set.records.push_back(std::move(r));
      it = index.emplace(key, set.records.size() - 1).first;
    }
    node_words& r = set.records[it->second];
    if (r.spec != f.spec || r.dim_names != record_dims(f).first || r.dim_sizes != record_dims(f).second) {
      throw vector_error(fmt::format("{}: the parts of record {} disagree on format or dims", manifest_path.string(),
                                     record_label(r)));
    }
    auto fill = [&](std::vector<std::int64_t>& dst, const char* part_name) {
      if (!dst.empty())
        throw vector_error(
            fmt::format("{}: record {} lists its {} part twice", manifest_path.string(), record_label(r), part_name));
      dst = words;
    };
    if (f.part == "real" || f.part == "re") {
      fill(r.re, "real");
    } else if (f.part == "im") {
      fill(r.im, "imaginary");
    } else {
      if (!r.re.empty())
        throw vector_error(fmt::format("{}: record {} lists its parts twice", manifest_path.string(), record_label(r)));
      for (std::size_t i = 0; i + 1 < words.size(); i += 2) {
        r.re.push_back(words[i]);
        r.im.push_back(words[i + 1]);
      }
    }
  }
  for (const node_words& r : set.records) {
    try {
      validate(r);
    } catch (const vector_error& e) {
      throw vector_error(fmt::format("{}: {}", manifest_path.string(), e.what()));
    }
  }
  return set;
}

}  // namespace fxmimo::vectors
