#pragma once
/// The processes one command runs on (README "On several processes (MPI)"). Every process of the
/// group runs the same command on the same input. Each evaluation's trials are cut into
/// contiguous shares, one per process (shard rank + 1 of size); every process evaluates its share
/// and then receives every trial's figures, in trial order, so that all processes reduce the same
/// bits, take the same decisions (a search's next candidate) and compute what one process alone
/// computes, for any number of processes. Without a group (the default), the process is alone.
///
/// The analysis room knows no transport: the program supplies the group (the app room's MPI
/// group, app/src/mpi_job.cpp), and tests may supply their own.

#include <cstddef>
#include <functional>
#include <stdexcept>
#include <string>
#include <vector>

#include "fxmimo/analysis/shard.hpp"

namespace fxmimo::analysis {

/// The transport between the processes of one command.
class process_group {
 public:
  process_group() = default;
  process_group(const process_group&) = delete;
  process_group& operator=(const process_group&) = delete;
  virtual ~process_group() = default;
  [[nodiscard]] virtual std::size_t rank() const = 0;  ///< 0 .. size() - 1
  [[nodiscard]] virtual std::size_t size() const = 0;
  /// Every process passes its bytes and receives every process's, in rank order. Collective:
  /// every process calls it at the same points of the same command.
  virtual std::vector<std::string> all_gather(const std::string& mine) = 0;
};

/// A process of the group failed while computing its share, or left the command early (an
/// error of its own outside the trials); every other process learns it at its next exchange
/// and throws this (what(): "rank RANK of SIZE failed: CAUSE", ranks from 0).
class process_failure : public std::runtime_error {
 public:
  process_failure(std::size_t failed_rank, std::size_t group_size, const std::string& cause);
  std::size_t failed_rank;
  std::size_t group_size;
  std::string cause;
};

/// The group the calling thread's analysis spreads over (the thread that runs the command; the
/// trial threads it starts never exchange); nullptr when alone.
process_group* current_process_group();

/// Whether the calling thread's work is spread over a group of more than one process.
bool spread_over_processes();

/// Makes `group` the current one for the scope's lifetime (the previous one after it).
class process_group_scope {
 public:
  explicit process_group_scope(process_group* group);
  process_group_scope(const process_group_scope&) = delete;
  process_group_scope& operator=(const process_group_scope&) = delete;
  ~process_group_scope();

 private:
  process_group* previous_;
};

/// This process's share of `count` items: all of them when alone, else the contiguous block
/// shard{rank + 1, size}.share(count).
index_range own_share(std::size_t count);

/// Runs `compute` (this process's share of some work, as bytes) and exchanges the results:
/// every process's bytes in rank order. Alone: compute's bytes only. An exception in `compute`
/// on any process becomes process_failure on every process (the lowest failed rank named), so
/// that none waits for a share that never comes and all stop at the same point.
std::vector<std::string> exchange_shares(const std::function<std::string()>& compute);

/// The last exchange of a command: this process is done, with its exit code and, when it
/// failed, the one-line message it printed. Returns when every process is done. A process still
/// inside the command meets it at its next exchange_shares and throws process_failure naming
/// this one, so a failure on one process alone (a write, a resource) never leaves the others
/// waiting. Returns the job's exit code, rank 0's (the rank whose message is printed), which
/// every process then exits with. Alone: returns exit_code at once.
int finish_in_group(int exit_code, const std::string& message);

}  // namespace fxmimo::analysis
