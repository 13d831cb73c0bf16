#pragma once
/// One job's share of a larger computation (README "Sharding a run or a sweep"): `run --shard I/N`
/// takes a share of the trials, `sweep --shard I/N` a share of the points, and `fxmimo merge`
/// puts the shares back together in index order.

#include <cstddef>

namespace fxmimo::analysis {

/// Indices begin, begin + 1, ..., end - 1.
struct index_range {
  std::size_t begin = 0;
  std::size_t end = 0;
  [[nodiscard]] std::size_t size() const { return end - begin; }
  [[nodiscard]] bool empty() const { return end == begin; }
  friend bool operator==(const index_range&, const index_range&) = default;
};

/// All of `total` indices.
inline index_range all_indices(std::size_t total) { return {0, total}; }

/// Shard `index` of `count`, numbered from 1 (as `--shard 1/4` ... `--shard 4/4`, and Slurm's
/// `--array=1-4`).
struct shard {
  std::size_t index = 1;
  std::size_t count = 1;
  /// Its share of `total` indices: the contiguous block [floor((index-1) total / count),
  /// floor(index total / count)). The shares of 1..count cover every index once, in order; their
  /// sizes differ by at most one, and with fewer indices than shards some are empty.
  [[nodiscard]] index_range share(std::size_t total) const {
    return {(index - 1) * total / count, index * total / count};
  }
  friend bool operator==(const shard&, const shard&) = default;
};

}  // namespace fxmimo::analysis
