#include "fxmimo/vectors/node_words.hpp"

#include <fmt/core.h>

#include <limits>

#include "fxmimo/vectors/errors.hpp"

namespace fxmimo::vectors {

std::size_t node_words::num_elements() const {
  std::size_t n = 1;
  for (std::size_t d : dim_sizes) n *= d;
  return n;
}

std::string node_words::port_name() const { return port.empty() ? node : port; }

std::vector<std::size_t> node_words::coordinates(std::size_t flat_index) const {
  std::vector<std::size_t> coords(dim_sizes.size(), 0);
  for (std::size_t i = dim_sizes.size(); i-- > 0;) {
    if (dim_sizes[i] == 0) continue;
    coords[i] = flat_index % dim_sizes[i];
    flat_index /= dim_sizes[i];
  }
  return coords;
}

namespace {

bool is_name(const std::string& s) {
  if (s.empty()) return false;
  for (char ch : s) {
    const bool ok =
        (ch >= 'a' && ch <= 'z') || (ch >= 'A' && ch <= 'Z') || (ch >= '0' && ch <= '9') || ch == '_' || ch == '-';
    if (!ok) return false;
  }
  return true;
}

}  // namespace

std::string record_label(const node_words& words) {
  std::string label = words.node + "/" + words.direction;
  if (!words.port.empty() && words.port != words.node) label += "/" + words.port;
  return label;
}

void validate(const node_words& words) {
  const std::string label = record_label(words);
  auto fail = [&](const std::string& what) { throw vector_error(fmt::format("record {}: {}", label, what)); };
  if (!is_name(words.node)) fail("node name must be letters, digits, '_' or '-'");
  if (!words.port.empty() && !is_name(words.port)) fail("port name must be letters, digits, '_' or '-'");
  if (words.direction != "in" && words.direction != "out") fail("direction must be \"in\" or \"out\"");
  try {
    fp::validate(words.spec.fmt);
  } catch (const std::exception& e) {
    fail(e.what());
  }
  if (words.spec.fmt.container_bits() > 64) {
    fail(fmt::format("{} needs {} bits as a signed integer; vector sets hold words up to 64 bits",
                     fp::describe(words.spec.fmt), words.spec.fmt.container_bits()));
  }
  if (words.dim_names.size() != words.dim_sizes.size()) fail("dim_names and dim_sizes differ in length");
  for (const std::string& name : words.dim_names) {
    if (!is_name(name)) fail(fmt::format("dimension name '{}' must be letters, digits, '_' or '-'", name));
  }
  const std::size_t n = words.num_elements();
  if (words.re.size() != n) fail(fmt::format("{} real words for {} elements", words.re.size(), n));
  if (words.is_complex && words.im.size() != n)
    fail(fmt::format("{} imaginary words for {} elements", words.im.size(), n));
  if (!words.is_complex && !words.im.empty()) fail("imaginary words given for a real record");

  const int w = words.spec.fmt.word_bits;
  std::int64_t lo = 0;
  std::int64_t hi = 0;
  if (words.spec.fmt.is_signed) {
    lo = w == 64 ? std::numeric_limits<std::int64_t>::min() : -(std::int64_t{1} << (w - 1));
    hi = w == 64 ? std::numeric_limits<std::int64_t>::max() : (std::int64_t{1} << (w - 1)) - 1;
  } else {
    hi = static_cast<std::int64_t>((std::uint64_t{1} << w) - 1U);
  }
  auto check_part = [&](const std::vector<std::int64_t>& part, const char* part_name) {
    for (std::size_t i = 0; i < part.size(); ++i) {
      if (part[i] < lo || part[i] > hi) {
        fail(fmt::format("{} word {} at flat index {} lies outside {} [{}, {}]", part_name, part[i], i,
                         fp::describe(words.spec.fmt), lo, hi));
      }
    }
  };
  check_part(words.re, words.is_complex ? "real part" : "word");
  check_part(words.im, "imaginary part");
}

}  // namespace fxmimo::vectors
