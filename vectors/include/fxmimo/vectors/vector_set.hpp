#pragma once
/// A vector set: a directory holding manifest.json and one file per record and part
/// (README "Handing vectors to RTL"). File names are NODE.DIRECTION[.PORT][.PART].EXT, e.g. tx_acc.in.weights.re.hex,
/// tx_acc.out.re.hex, dac.out.im.npy (PORT is left out when it equals the node, PART for real
/// records and interleaved files).
///
/// Writing is all-or-nothing as far as a reader can tell: every record is validated before the
/// first byte is written; each file goes to a hidden temporary name in the same directory and is
/// renamed into place; a hidden marker (rewrite_marker_name) listing every old and new file name
/// is written first, then a manifest.json already present is removed, and the new one is renamed
/// into place after the last file; on any failure the files of this run and the temporaries are
/// removed. A directory without manifest.json is never a (complete) set; one that holds the
/// marker (a writer was killed) is taken as an earlier set and cleaned by the next writer.

#include <filesystem>
#include <string_view>
#include <vector>

#include "fxmimo/vectors/manifest.hpp"
#include "fxmimo/vectors/node_words.hpp"

namespace fxmimo::vectors {

/// Writes `records` as a vector set in `dir` (created when absent). `dir` must be absent, empty
/// or hold an earlier vector set (whose files are replaced; files it listed that the new set
/// does not are removed). Records must have distinct (node, direction, port). Returns the
/// manifest written. Throws vector_error (nothing complete-looking left behind).
manifest write_vector_set(const std::filesystem::path& dir, const manifest_info& info,
                          const std::vector<node_words>& records, file_form form = file_form::hex,
                          complex_layout layout = complex_layout::split);

/// A vector set read back: its manifest and its records (in manifest order, one per
/// (node, direction, port), parts joined).
struct vector_set {
  std::filesystem::path dir;
  manifest man;
  std::vector<node_words> records;

  /// The record with this node, direction and port (empty port: the node's only record in that
  /// direction). nullptr when there is none; vector_error when an empty port is ambiguous.
  [[nodiscard]] const node_words* find(std::string_view node, std::string_view direction,
                                       std::string_view port = {}) const;
  /// The manifest entries of a record, in part order (re before im).
  [[nodiscard]] std::vector<const file_entry*> files_of(const node_words& record) const;
};

/// Reads and checks a vector set: the manifest (manifest_from_json), every listed file's size
/// and SHA-256, its words (digit counts, line count, npy dtype and shape), and every record
/// (validate()). vector_error naming the file and line at fault.
vector_set read_vector_set(const std::filesystem::path& dir);

/// The file name a record's part gets: part is "real", "re", "im" or "re_im".
std::string file_name_for(const node_words& record, std::string_view part, file_form form);

}  // namespace fxmimo::vectors
