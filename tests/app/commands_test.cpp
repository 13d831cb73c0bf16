// Exit codes of the fxmimo commands (app/src/commands.cpp): a failed check 1, bad input 2 (an
// std::invalid_argument from a library is bad input too), an internal error 3 with its own
// message. The CLI tests run the program; a broken invariant cannot be provoked from outside, so
// run_guarded is driven directly here.
#include "commands.hpp"

#include <gtest/gtest.h>

#include <stdexcept>

namespace cli = fxmimo::cli;

namespace {

TEST(run_guarded, maps_outcomes_to_exit_codes) {
  cli::run_guarded("t", [] { return cli::exit_check_failed; });
  EXPECT_EQ(cli::last_exit_code(), 1);
  cli::run_guarded("t", []() -> int { throw std::runtime_error("bad.toml:3: x: unknown key"); });
  EXPECT_EQ(cli::last_exit_code(), 2);
  cli::run_guarded("t", []() -> int { throw std::invalid_argument("range profiling needs at least one trial"); });
  EXPECT_EQ(cli::last_exit_code(), 2);
  testing::internal::CaptureStderr();
  cli::run_guarded("t", []() -> int { throw std::logic_error("node dac: trials differ in shape"); });
  const std::string err = testing::internal::GetCapturedStderr();
  EXPECT_EQ(cli::last_exit_code(), 3);
  EXPECT_EQ(err,
            "fxmimo t: internal error: node dac: trials differ in shape (please report it with the command line and "
            "input files)\n");
  cli::run_guarded("t", [] { return cli::exit_ok; });
  EXPECT_EQ(cli::last_exit_code(), 0);
}

}  // namespace
