#pragma once
/// manifest.json of a vector set: where the words came from and, per file, what it holds.
/// The writer puts it in place last; its presence marks a complete set. Field by field:
///   kind "fxmimo vector set", schema 1, tool {name, version},
///   scenario {name, sha256, text}  (the scenario text embedded in full, SHA-256 of its bytes),
///   seed, trials, form ("hex" | "bin" | "npy"), complex_layout ("split" | "interleaved"),
///   word_order ("row-major, last dimension fastest"), files [ {file, node, direction, port,
///   part ("real" | "re" | "im" | "re_im"), format (Q notation), word_bits, frac_bits, signed,
///   rounding, overflow, dims [{name, size}] in file order, word_count, bytes, sha256,
///   dtype (npy only)} ].

#include <cstdint>
#include <nlohmann/json_fwd.hpp>
#include <optional>
#include <string>
#include <string_view>
#include <vector>

#include "fxmimo/fixedpoint/requantize.hpp"

namespace fxmimo::vectors {

namespace fp = fxmimo::fixedpoint;

inline constexpr std::string_view manifest_file_name = "manifest.json";
/// Hidden beside the files while a set is being written: a JSON list of every file name the
/// rewrite may leave (old and new), so that a writer killed half-way leaves a directory the next
/// writer recognises and cleans; removed when the set is complete.
inline constexpr std::string_view rewrite_marker_name = ".rewrite.json";
/// Version of manifest.json. 2: an interleaved file's dims end with the part axis
/// {"name": "part", "size": 2}, so word_count is the product of its dims. Version 1 files (no
/// part axis) are read too.
inline constexpr int manifest_schema = 2;

/// File form of a set: one word per line in hex ($readmemh) or binary ($readmemb), or NEP 1 .npy.
enum class file_form { hex, bin, npy };
/// Complex records: "split" (default) writes real and imaginary parts to two files
/// (NAME.re.hex, NAME.im.hex) with identical layout; "interleaved" writes one file whose
/// innermost position is the part (re, im, re, im, ...; an .npy gets a last axis of size 2).
enum class complex_layout { split, interleaved };

std::string_view to_string(file_form form);
std::string_view to_string(complex_layout layout);
std::optional<file_form> parse_file_form(std::string_view text);
std::optional<complex_layout> parse_complex_layout(std::string_view text);
/// File extension without the dot: "hex", "bin", "npy".
std::string_view file_extension(file_form form);

/// What the caller knows about the origin of the words.
struct manifest_info {
  std::string tool_version;   ///< empty: this library's version
  std::string scenario_name;  ///< e.g. the scenario file's name
  std::string scenario_text;  ///< embedded in full; its SHA-256 goes beside it
  std::uint64_t seed = 0;
  std::vector<std::uint64_t> trials;
};

/// One file as the manifest lists it.
struct file_entry {
  std::string file;  ///< name inside the set directory (no path separators)
  std::string node;
  std::string direction;
  std::string port;  ///< never empty in a manifest (the node name when the record has none)
  std::string part;  ///< "real", "re", "im" or "re_im" (interleaved)
  fp::target spec;
  std::vector<std::string> dim_names;
  std::vector<std::size_t> dim_sizes;
  std::size_t word_count = 0;
  std::uint64_t bytes = 0;
  std::string sha256;
  std::string dtype;  ///< npy only: "<i2", "<i4", "<i8"
};

struct manifest {
  manifest_info info;
  std::string scenario_sha256;
  file_form form = file_form::hex;
  complex_layout layout = complex_layout::split;
  std::vector<file_entry> files;
};

nlohmann::json to_json(const manifest& m);
/// Parses and checks a manifest: every field present with the right type, known names, a
/// format whose Q notation agrees with word_bits/frac_bits/signed, safe file names, and the
/// scenario digest equal to SHA-256 of the embedded text. vector_error "SOURCE: ..." otherwise.
manifest manifest_from_json(const nlohmann::json& j, std::string_view source);

/// The version this library writes when manifest_info::tool_version is empty.
std::string_view library_version();

}  // namespace fxmimo::vectors
