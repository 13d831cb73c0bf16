#pragma once
/// The words of one node in one trial: a rows x cols matrix (row-major) of raw integers in the
/// node's format, complex (re and im) or real (re only).

#include <cstdint>
#include <vector>

namespace fxmimo::datapath {

struct word_matrix {
  int rows = 0;
  int cols = 0;
  bool is_complex = true;
  std::vector<std::int64_t> re;
  std::vector<std::int64_t> im;  ///< empty for real nodes

  word_matrix() = default;
  word_matrix(int num_rows, int num_cols, bool complex_values)
      : rows(num_rows),
        cols(num_cols),
        is_complex(complex_values),
        re(static_cast<std::size_t>(num_rows) * static_cast<std::size_t>(num_cols), 0),
        im(complex_values ? re.size() : 0, 0) {}
  [[nodiscard]] std::size_t size() const { return re.size(); }
  [[nodiscard]] std::size_t at(int row, int col) const {
    return static_cast<std::size_t>(row) * static_cast<std::size_t>(cols) + static_cast<std::size_t>(col);
  }
  [[nodiscard]] bool empty() const { return re.empty(); }
  friend bool operator==(const word_matrix&, const word_matrix&) = default;
};

}  // namespace fxmimo::datapath
