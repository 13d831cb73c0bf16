// Consumer of the installed fxmimo package: requantises 0.3 into Q0.15 and prints the word.
#include <fxmimo/fixedpoint/conversions.hpp>
#include <fxmimo/fixedpoint/words.hpp>

#include <cstdio>

int main() {
  namespace fp = fxmimo::fixedpoint;
  const fp::requantizer<std::int64_t> q({fp::parse_format("Q0.15"), fp::rounding_mode::half_even, fp::overflow_mode::saturate});
  fp::counters c;
  // 0.3 * 2^15 = 9830.4 -> 9830 = 0x2666.
  std::printf("%s\n", fp::to_hex_word(fp::from_double(0.3, q, c), 16).c_str());
  return 0;
}
