// Trials spread over a group of processes (fxmimo/analysis/processes.hpp) give what one process
// gives, bit for bit: runs, range profiles, sweeps and a whole word-length search on 1 to 5
// ranks, compared through the JSON the program writes. The ranks here are threads, each with its
// own group member, that meet in all_gather like MPI ranks meet in MPI_Allgather; the real MPI
// transport is exercised by tests/mpi (mpirun). Also the failure protocol: a rank whose share
// throws, a rank that leaves the command early, and a stop, each seen alike by every rank.
#include "fxmimo/analysis/processes.hpp"

#include <gtest/gtest.h>

#include <condition_variable>
#include <functional>
#include <mutex>
#include <string>
#include <thread>
#include <vector>

#include "fxmimo/analysis/range.hpp"
#include "fxmimo/analysis/resources.hpp"
#include "fxmimo/analysis/sweep.hpp"
#include "fxmimo/analysis/tune.hpp"
#include "fxmimo/report/records.hpp"

namespace h = fxmimo::analysis;
namespace d = fxmimo::datapath;
namespace g = fxmimo::golden;
namespace rep = fxmimo::report;

namespace {

/// The meeting point of thread ranks: all_gather waits until every rank has given its bytes.
class thread_meeting {
 public:
  explicit thread_meeting(std::size_t size) : slots_(size) {}
  std::vector<std::string> gather(std::size_t rank, const std::string& mine) {
    std::unique_lock lock(mutex_);
    const std::uint64_t round = round_;
    slots_[rank] = mine;
    if (++arrived_ == slots_.size()) {
      result_ = slots_;
      arrived_ = 0;
      ++round_;
      ++rounds_;
      woken_.notify_all();
    } else {
      woken_.wait(lock, [&] { return round_ != round; });
    }
    return result_;
  }
  [[nodiscard]] std::size_t size() const { return slots_.size(); }
  [[nodiscard]] std::uint64_t rounds() const { return rounds_; }

 private:
  std::mutex mutex_;
  std::condition_variable woken_;
  std::vector<std::string> slots_, result_;
  std::size_t arrived_ = 0;
  std::uint64_t round_ = 0, rounds_ = 0;
};

class thread_rank final : public h::process_group {
 public:
  thread_rank(thread_meeting& meeting, std::size_t rank) : meeting_(meeting), rank_(rank) {}
  [[nodiscard]] std::size_t rank() const override { return rank_; }
  [[nodiscard]] std::size_t size() const override { return meeting_.size(); }
  std::vector<std::string> all_gather(const std::string& mine) override { return meeting_.gather(rank_, mine); }

 private:
  thread_meeting& meeting_;
  std::size_t rank_;
};

/// Runs body(rank) on `size` threads, each with its rank as the current group, then the
/// closing exchange (finish_in_group) with exit code 0 or 2 (body threw), which must give every
/// rank rank 0's code. Returns each rank's outcome: the string body returned, or "threw: " +
/// what().
std::vector<std::string> on_ranks(std::size_t size, const std::function<std::string(std::size_t)>& body,
                                  std::uint64_t* rounds = nullptr) {
  thread_meeting meeting(size);
  std::vector<std::string> outcome(size);
  std::vector<int> own_code(size), job_code(size);
  std::vector<std::thread> threads;
  for (std::size_t r = 0; r < size; ++r) {
    threads.emplace_back([&, r] {
      thread_rank me(meeting, r);
      const h::process_group_scope scope(&me);
      int code = 0;
      std::string message;
      try {
        outcome[r] = body(r);
      } catch (const std::exception& e) {
        outcome[r] = std::string("threw: ") + e.what();
        code = 2;
        message = e.what();
      }
      own_code[r] = code;
      job_code[r] = h::finish_in_group(code, message);
    });
  }
  for (std::thread& t : threads) t.join();
  // Every rank leaves with rank 0's exit code, the one of the message that is printed.
  for (std::size_t r = 0; r < size; ++r) EXPECT_EQ(job_code[r], own_code[0]) << "rank " << r;
  if (rounds != nullptr) *rounds = meeting.rounds();
  return outcome;
}

/// A small scenario of our own: 16 antennas, 3 users, two cells reusing the pilots, ZF with
/// LDL^H, a few narrow nodes so that errors and overflows are not all zero.
const char* scenario_text = R"(name = "spread-16x3"
seed = 9100
trials = 7
[array]
antennas = 16
[cells]
count = 2
users_per_cell = 3
user_gains_db = [0.0, -2.0, -5.0]
cross_gain_db = -10.0
[pilots]
length = 4
sequence = "walsh"
snr_db = 12.0
[precoder]
kind = "zf"
inversion = "ldl"
[data]
modulation = "16qam"
symbols = 12
snr_db = 18.0

[nodes.chan_est]
format = "Q2.9"
rounding = "half_even"
overflow = "saturate"

[nodes.weights]
format = "Q0.10"
rounding = "floor"
overflow = "wrap"

[nodes.dac]
format = "Q0.11"
rounding = "half_even"
overflow = "saturate"
)";

struct inputs {
  g::scenario scen = g::parse_scenario_text(scenario_text, "spread-16x3.toml");
  d::datapath_config config = d::parse_datapath_config(scenario_text, "spread-16x3.toml");
};

std::string run_json(const inputs& in, int trials) {
  return rep::to_json(rep::make_record(h::run_trials(in.scen, in.config, h::first_trials(trials), 2))).dump();
}

}  // namespace

TEST(processes, run_on_one_to_five_ranks_is_bit_identical_to_one_process) {
  const inputs in;
  for (const int trials : {7, 2}) {  // 2 trials on up to 5 ranks: some ranks have none
    const std::string alone = run_json(in, trials);
    for (std::size_t size = 1; size <= 5; ++size) {
      const std::vector<std::string> got = on_ranks(size, [&](std::size_t) { return run_json(in, trials); });
      for (std::size_t r = 0; r < size; ++r)
        EXPECT_EQ(got[r], alone) << trials << " trials, rank " << r << " of " << size;
    }
  }
}

TEST(processes, range_profile_on_two_and_three_ranks_is_bit_identical) {
  const inputs in;
  auto profile = [&] {
    return rep::to_json(rep::make_record(h::profile_ranges(in.scen, in.config, 40, 2, 1e-3))).dump();
  };
  const std::string alone = profile();
  for (std::size_t size : {2, 3}) {
    const std::vector<std::string> got = on_ranks(size, [&](std::size_t) { return profile(); });
    for (std::size_t r = 0; r < size; ++r) EXPECT_EQ(got[r], alone) << "rank " << r << " of " << size;
  }
}

TEST(processes, sweep_and_tune_on_three_ranks_are_bit_identical) {
  const inputs in;
  auto sweep = [&] {
    return rep::to_json(rep::make_record(h::run_sweep(in.scen, in.config, {d::node_id::weights, d::node_id::dac}, 6, 9,
                                                      h::sweep_axis::frac, h::first_trials(5), 1)))
        .dump();
  };
  auto tune = [&] {
    h::tune_limits limits;
    limits.max_sinr_loss_db = 0.2;
    limits.max_evm_pct = 2.0;
    limits.max_overflow_rate = 1e-3;
    limits.max_rms_tx_power_error_db = 0.2;
    const h::tune_results t =
        h::tune_widths(in.scen, in.config, limits, h::cost_model::bits, {4, 60, 6}, 1, 1e-3, 0.1, {});
    return rep::to_json(rep::make_record(in.scen, t)).dump();
  };
  const std::string sweep_alone = sweep(), tune_alone = tune();
  std::uint64_t rounds = 0;
  const std::vector<std::string> got = on_ranks(
      3, [&](std::size_t) { return sweep() + "\n" + tune(); }, &rounds);
  for (std::size_t r = 0; r < 3; ++r) EXPECT_EQ(got[r], sweep_alone + "\n" + tune_alone) << "rank " << r;
  // The ranks really exchanged: one round per sweep point, per search evaluation and more.
  EXPECT_GT(rounds, 8U);
}

TEST(processes, a_share_that_throws_fails_every_rank_naming_the_rank_and_cause) {
  const std::vector<std::string> got = on_ranks(3, [](std::size_t rank) {
    (void)h::exchange_shares([&]() -> std::string {
      if (rank == 1) throw std::runtime_error("out of memory in the Gram");
      return "share";
    });
    return std::string("went on");
  });
  for (std::size_t r = 0; r < 3; ++r) EXPECT_EQ(got[r], "threw: rank 1 of 3 failed: out of memory in the Gram") << r;
}

TEST(processes, a_rank_that_leaves_early_fails_the_others_at_their_next_exchange) {
  const std::vector<std::string> got = on_ranks(3, [](std::size_t rank) {
    if (rank == 2) throw std::invalid_argument("scenario.toml:3: cannot write out.json");
    (void)h::exchange_shares([] { return std::string("share"); });
    return std::string("went on");
  });
  EXPECT_EQ(got[2], "threw: scenario.toml:3: cannot write out.json");
  for (std::size_t r = 0; r < 2; ++r) {
    EXPECT_EQ(got[r],
              "threw: rank 2 of 3 failed: it left the command with exit code 2 before this exchange: "
              "scenario.toml:3: cannot write out.json")
        << r;
  }
}

TEST(processes, a_stop_on_one_rank_stops_every_rank_at_the_same_exchange) {
  const std::vector<std::string> got = on_ranks(2, [](std::size_t rank) {
    try {
      (void)h::exchange_shares([&]() -> std::string {
        if (rank == 0) throw h::stop_requested(15);
        return "share";
      });
    } catch (const h::stop_requested& e) {
      return "stopped by " + std::to_string(e.signal);
    }
    return std::string("went on");
  });
  EXPECT_EQ(got[0], "stopped by 15");
  EXPECT_EQ(got[1], "stopped by 15");
}

TEST(processes, shares_are_contiguous_blocks_in_rank_order) {
  const std::vector<std::string> got = on_ranks(3, [](std::size_t) {
    const h::index_range mine = h::own_share(10);
    std::string text;
    for (const std::string& s :
         h::exchange_shares([&] { return std::to_string(mine.begin) + "-" + std::to_string(mine.end); }))
      text += s + " ";
    return text;
  });
  for (const std::string& s : got) EXPECT_EQ(s, "0-3 3-6 6-10 ");
  EXPECT_EQ(h::own_share(10), (h::index_range{0, 10}));  // alone: everything
}
