// The current process group and the exchange of shares (processes.hpp).
#include "fxmimo/analysis/processes.hpp"

#include <fmt/core.h>

#include <algorithm>

#include "fxmimo/analysis/resources.hpp"

namespace fxmimo::analysis {

namespace {

// Per thread: the thread that runs a command (the main thread) has the group; the trial threads
// it starts never exchange. Tests run several groups side by side, one per thread.
thread_local process_group* current = nullptr;

// Each process's bytes in an exchange start with one status byte.
constexpr char share_ok = 'o';
constexpr char share_failed = 'f';
constexpr char share_stopped = 's';
constexpr char process_finished = 'x';  // then the exit code, a space and the message

}  // namespace

process_failure::process_failure(std::size_t rank, std::size_t size, const std::string& why)
    : std::runtime_error(fmt::format("rank {} of {} failed: {}", rank, size, why)),
      failed_rank(rank),
      group_size(size),
      cause(why) {}

process_group* current_process_group() { return current; }

bool spread_over_processes() { return current != nullptr && current->size() > 1; }

process_group_scope::process_group_scope(process_group* group) : previous_(current) { current = group; }

process_group_scope::~process_group_scope() { current = previous_; }

index_range own_share(std::size_t count) {
  if (!spread_over_processes()) return all_indices(count);
  return shard{current->rank() + 1, current->size()}.share(count);
}

std::vector<std::string> exchange_shares(const std::function<std::string()>& compute) {
  if (!spread_over_processes()) return {compute()};
  process_group* g = current;
  std::string mine(1, share_ok);
  try {
    mine += compute();
  } catch (const stop_requested& e) {
    // A stop signal (mpirun passes it to every process) stops the job at this exchange: the
    // others still receive a share, so none waits for ever, and stop with it.
    mine.assign(1, share_stopped);
    mine += std::to_string(e.signal);
  } catch (const std::exception& e) {
    mine.assign(1, share_failed);
    mine += e.what();
  }
  std::vector<std::string> all = g->all_gather(mine);
  if (all.size() != g->size()) throw std::logic_error("an exchange returned a share count other than the group's");
  for (const std::string& s : all) {
    if (!s.empty() && s[0] == share_stopped) throw stop_requested(std::stoi(s.substr(1)));
  }
  for (std::size_t r = 0; r < all.size(); ++r) {
    const std::string& s = all[r];
    if (!s.empty() && s[0] == process_finished) {
      const std::size_t space = s.find(' ');
      throw process_failure(r, all.size(),
                            fmt::format("it left the command with exit code {} before this exchange: {}",
                                        s.substr(1, space - 1), space == std::string::npos ? "" : s.substr(space + 1)));
    }
    if (s.empty() || s[0] != share_ok) throw process_failure(r, all.size(), s.empty() ? "no share" : s.substr(1));
  }
  for (std::string& s : all) s.erase(0, 1);
  return all;
}

int finish_in_group(int exit_code, const std::string& message) {
  if (!spread_over_processes()) return exit_code;
  process_group* g = current;
  const std::string mine = process_finished + std::to_string(exit_code) + " " + message;
  // Processes still inside the command answer with a share; they stop at this round (their
  // exchange throws) and come here, so the rounds end when every process is done.
  while (true) {
    const std::vector<std::string> all = g->all_gather(mine);
    if (std::all_of(all.begin(), all.end(),
                    [](const std::string& s) { return !s.empty() && s[0] == process_finished; }))
      return std::stoi(all.front().substr(1));  // "x" CODE " " MESSAGE: rank 0's code
  }
}

}  // namespace fxmimo::analysis
