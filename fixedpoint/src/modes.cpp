#include "fxmimo/fixedpoint/modes.hpp"

#include <utility>

#include "fxmimo/fixedpoint/accumulator.hpp"

namespace fxmimo::fixedpoint {

namespace {

constexpr std::pair<rounding_mode, std::string_view> rounding_names[] = {
    {rounding_mode::floor, "floor"},
    {rounding_mode::ceil, "ceil"},
    {rounding_mode::toward_zero, "toward_zero"},
    {rounding_mode::half_up, "half_up"},
    {rounding_mode::half_down, "half_down"},
    {rounding_mode::half_toward_zero, "half_toward_zero"},
    {rounding_mode::half_away, "half_away"},
    {rounding_mode::half_even, "half_even"},
};
constexpr std::pair<overflow_mode, std::string_view> overflow_names[] = {
    {overflow_mode::wrap, "wrap"},
    {overflow_mode::saturate, "saturate"},
    {overflow_mode::saturate_symmetric, "saturate_symmetric"},
    {overflow_mode::saturate_zero, "saturate_zero"},
};
constexpr std::pair<accumulation_order, std::string_view> order_names[] = {
    {accumulation_order::sequential, "sequential"},
    {accumulation_order::pairwise, "pairwise"},
    {accumulation_order::lanes, "lanes"},
};

template <class Mode, std::size_t N>
std::string_view name_of(const std::pair<Mode, std::string_view> (&table)[N], Mode mode) {
  for (const auto& [m, name] : table)
    if (m == mode) return name;
  return "?";
}

template <class Mode, std::size_t N>
std::optional<Mode> mode_of(const std::pair<Mode, std::string_view> (&table)[N], std::string_view text) {
  for (const auto& [m, name] : table)
    if (name == text) return m;
  return std::nullopt;
}

template <class Mode, std::size_t N>
std::string list_of(const std::pair<Mode, std::string_view> (&table)[N]) {
  std::string out;
  for (const auto& entry : table) {
    if (!out.empty()) out += ", ";
    out += entry.second;
  }
  return out;
}

}  // namespace

std::string_view to_string(rounding_mode mode) { return name_of(rounding_names, mode); }
std::string_view to_string(overflow_mode mode) { return name_of(overflow_names, mode); }
std::optional<rounding_mode> parse_rounding_mode(std::string_view text) { return mode_of(rounding_names, text); }
std::optional<overflow_mode> parse_overflow_mode(std::string_view text) { return mode_of(overflow_names, text); }
std::string list_rounding_modes() { return list_of(rounding_names); }
std::string list_overflow_modes() { return list_of(overflow_names); }
std::string_view to_string(accumulation_order order) { return name_of(order_names, order); }
std::optional<accumulation_order> parse_accumulation_order(std::string_view text) { return mode_of(order_names, text); }
std::string list_accumulation_orders() { return list_of(order_names); }

}  // namespace fxmimo::fixedpoint
