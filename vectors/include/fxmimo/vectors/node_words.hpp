#pragma once
/// One array of words at one datapath node, in one direction: the unit a vector set stores.

#include <cstddef>
#include <cstdint>
#include <string>
#include <vector>

#include "fxmimo/fixedpoint/requantize.hpp"

namespace fxmimo::vectors {

namespace fp = fxmimo::fixedpoint;

/// Words of one node in one direction. Words are the integer values of the format (a signed
/// word is sign-extended: -1 is -1, not 2^W - 1); W <= 64 for signed formats and W <= 63 for
/// unsigned ones (a 64-bit word is the datapath limit).
/// Element order is row-major over dim_sizes: the last dimension varies fastest, so the flat
/// index of (i_0, ..., i_{n-1}) is ((i_0 d_1 + i_1) d_2 + ...) + i_{n-1}.
struct node_words {
  std::string node;       ///< datapath node, e.g. "tx_acc"
  std::string direction;  ///< "in" (stimulus the node consumes) or "out" (words it must produce)
  /// Name of the array at that node: an input node has one port per operand (tx_acc consumes
  /// "weights" and "symbols"); empty means the node's own name (the usual case for "out").
  std::string port;
  fp::target spec;                     ///< format, rounding and overflow of the words
  std::vector<std::string> dim_names;  ///< e.g. {"antenna", "symbol"}, file order
  std::vector<std::size_t> dim_sizes;  ///< same length as dim_names
  bool is_complex = false;
  std::vector<std::int64_t> re;  ///< real parts (or the words of a real node)
  std::vector<std::int64_t> im;  ///< imaginary parts; empty for a real node

  /// Product of dim_sizes (1 for no dimensions).
  [[nodiscard]] std::size_t num_elements() const;
  /// port, or node when port is empty.
  [[nodiscard]] std::string port_name() const;
  /// Coordinates of a flat index, one per dimension.
  [[nodiscard]] std::vector<std::size_t> coordinates(std::size_t flat_index) const;
};

/// Throws vector_error naming the record when: names are empty or not [A-Za-z0-9_-]+,
/// direction is not in/out, dim_names and dim_sizes differ in length, the word counts differ
/// from num_elements(), im is set for a real node (or missing for a complex one), the format is
/// wider than 64 bits (63 unsigned), or a word lies outside the format's range.
void validate(const node_words& words);

/// "tx_acc/out" or "tx_acc/in/weights": how reports name a record.
std::string record_label(const node_words& words);

}  // namespace fxmimo::vectors
