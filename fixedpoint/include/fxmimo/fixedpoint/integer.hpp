#pragma once
/// The integer types behind raw words and exact intermediates, and the few primitives the
/// arithmetic needs on each of them. Native types (int64, int128) use two's complement, whose
/// shifts C++20 defines; Boost types (int256, unbounded cpp_int) are sign-magnitude and are
/// handled through their magnitude. Nothing here rounds or saturates: see rounding.hpp and
/// requantize.hpp (requantizer::overflow) for the one definition of each.

#include <boost/multiprecision/cpp_int.hpp>
#include <cmath>
#include <cstdint>
#include <string>

namespace fxmimo::fixedpoint {

__extension__ typedef __int128 int128;
__extension__ typedef unsigned __int128 uint128;
/// 256-bit signed integer, magnitude up to 2^256 - 1, no allocation.
using int256 = boost::multiprecision::int256_t;
/// Unbounded signed integer: used where an exact value has no useful width bound
/// (decimal input, quotients, roots).
using big_int = boost::multiprecision::cpp_int;

template <class T>
struct int_traits;

template <>
struct int_traits<std::int64_t> {
  using unsigned_type = std::uint64_t;
  static constexpr int bits = 64;  ///< holds every two's-complement value of this many bits
  static constexpr bool native = true;
};
template <>
struct int_traits<int128> {
  using unsigned_type = uint128;
  static constexpr int bits = 128;
  static constexpr bool native = true;
};
template <>
struct int_traits<int256> {
  static constexpr int bits = 256;
  static constexpr bool native = false;
};
template <>
struct int_traits<big_int> {
  static constexpr int bits = 1 << 20;  ///< effectively unbounded
  static constexpr bool native = false;
};

/// 2^e as T, 0 <= e < int_traits<T>::bits - 1 for native types.
template <class T>
T pow2(int e) {
  if constexpr (int_traits<T>::native) {
    using U = typename int_traits<T>::unsigned_type;
    return static_cast<T>(U{1} << e);
  } else {
    T one = 1;
    return one << static_cast<unsigned>(e);
  }
}

/// floor(x / 2^s) for 1 <= s < int_traits<T>::bits.
template <class T>
T floor_shift(const T& x, int s) {
  if constexpr (int_traits<T>::native) {
    return static_cast<T>(x >> s);  // arithmetic shift: defined since C++20
  } else {
    if (x >= 0) return T(x >> static_cast<unsigned>(s));
    T mag_minus_one = T(-x) - 1;
    return T(-T(mag_minus_one >> static_cast<unsigned>(s)) - 1);
  }
}

/// x * 2^s for 0 <= s, where the caller knows the product fits in T.
template <class T>
T shift_left(const T& x, int s) {
  if constexpr (int_traits<T>::native) {
    using U = typename int_traits<T>::unsigned_type;
    return static_cast<T>(static_cast<U>(x) << s);
  } else {
    if (x >= 0) return T(x << static_cast<unsigned>(s));
    return T(-T(T(-x) << static_cast<unsigned>(s)));
  }
}

/// True when x * 2^s fits in T (s >= 0).
template <class T>
bool shift_left_fits(const T& x, int s) {
  if (x == 0 || s == 0) return true;
  if constexpr (std::is_same_v<T, big_int>) return true;
  constexpr int bits = int_traits<T>::bits;
  if (s >= bits - 1) return false;
  if constexpr (int_traits<T>::native) {
    T limit = floor_shift(std::numeric_limits<T>::max(), s);
    T low = floor_shift(std::numeric_limits<T>::min(), s);
    return x <= limit && x >= low;
  } else {
    T magnitude = x >= 0 ? x : T(-x);
    return boost::multiprecision::msb(magnitude) + static_cast<unsigned>(s) < static_cast<unsigned>(bits) - 1;
  }
}

/// The value as double, rounded to nearest: for reporting only, never inside the arithmetic.
template <class T>
double to_double_approx(const T& x) {
  if constexpr (std::is_same_v<T, std::int64_t>) {
    return static_cast<double>(x);
  } else if constexpr (std::is_same_v<T, int128>) {
    // The magnitude in two 64-bit halves, the sign applied last: below 2^64 the result is the
    // low half rounded once, exactly as the 64-bit conversion; above, the sum rounds once more
    // at most. (Splitting the signed value instead rounded the low half of a small negative
    // value, 2^64 - 5 for -5, up to 2^64, so that -5 read as 0.)
    const bool negative = x < 0;
    const uint128 magnitude = negative ? uint128{0} - static_cast<uint128>(x) : static_cast<uint128>(x);
    const auto high = static_cast<std::uint64_t>(magnitude >> 64);
    const auto low = static_cast<std::uint64_t>(magnitude);
    const double value = std::ldexp(static_cast<double>(high), 64) + static_cast<double>(low);
    return negative ? -value : value;
  } else {
    return x.template convert_to<double>();
  }
}

/// Converts between our integer types; the caller guarantees the value fits in To.
template <class To, class From>
To convert_int(const From& x) {
  if constexpr (std::is_same_v<To, From>) {
    return x;
  } else if constexpr (int_traits<To>::native && int_traits<From>::native) {
    return static_cast<To>(x);
  } else if constexpr (!int_traits<To>::native && int_traits<From>::native) {
    if constexpr (std::is_same_v<From, std::int64_t>) {
      return To(x);
    } else {
      // int128 -> Boost: assemble from two 64-bit halves through the magnitude.
      bool negative = x < 0;
      uint128 mag = negative ? static_cast<uint128>(0) - static_cast<uint128>(x) : static_cast<uint128>(x);
      To result = To(static_cast<std::uint64_t>(mag >> 64));
      result <<= 64;
      result += To(static_cast<std::uint64_t>(mag & ~std::uint64_t{0}));
      return negative ? To(-result) : result;
    }
  } else if constexpr (!int_traits<To>::native && !int_traits<From>::native) {
    return To(x);
  } else {
    // Boost -> native, value known to fit.
    bool negative = x < 0;
    From mag = negative ? From(-x) : x;
    using U = typename int_traits<To>::unsigned_type;
    U result = 0;
    if constexpr (std::is_same_v<To, int128>) {
      From high = mag >> 64;
      From low = mag - (high << 64);
      result = (static_cast<U>(high.template convert_to<std::uint64_t>()) << 64) |
               static_cast<U>(low.template convert_to<std::uint64_t>());
    } else {
      result = static_cast<U>(mag.template convert_to<std::uint64_t>());
    }
    return negative ? static_cast<To>(U{0} - result) : static_cast<To>(result);
  }
}

/// Decimal text of any of our integer types.
template <class T>
std::string to_decimal_string(const T& x) {
  return convert_int<big_int>(x).str();
}

}  // namespace fxmimo::fixedpoint
