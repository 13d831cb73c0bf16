#pragma once
/// Writing an output's bytes to its (temporary) file. One home for the write itself, so that the
/// crash-safety test can stretch it: with the environment variable FXMIMO_TEST_SLOW_WRITES set,
/// the bytes go out in eight pieces with a pause of that many milliseconds (at least 1) after
/// each, so that a kill at a random moment lands inside a write often (tests/cli/kill_test.cpp).
/// Unset, one write.

#include <ostream>
#include <string_view>

namespace fxmimo::io {

/// Writes `bytes` to `out` and flushes; the stream's state tells whether it worked.
void write_output_bytes(std::ostream& out, std::string_view bytes);

}  // namespace fxmimo::io
