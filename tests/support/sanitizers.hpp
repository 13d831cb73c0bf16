#pragma once
// Whether this test program was built with AddressSanitizer: gcc says so with
// __SANITIZE_ADDRESS__, clang with __has_feature(address_sanitizer).

namespace fxmimo::test {

constexpr bool built_with_asan() {
#if defined(__SANITIZE_ADDRESS__)
  return true;
#elif defined(__has_feature)
#if __has_feature(address_sanitizer)
  return true;
#else
  return false;
#endif
#else
  return false;
#endif
}

}  // namespace fxmimo::test
