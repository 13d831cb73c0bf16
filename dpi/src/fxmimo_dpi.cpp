// The C ABI of fxmimo_dpi.h: a thin layer over the model's own functions (scenario reading,
// golden trial, bit-true datapath, requantizer); no arithmetic of its own.
#include "fxmimo_dpi.h"

#include <fmt/core.h>

#include <exception>
#include <fstream>
#include <map>
#include <memory>
#include <sstream>
#include <string>

#include "fxmimo/datapath/config.hpp"
#include "fxmimo/datapath/datapath.hpp"
#include "fxmimo/datapath/plan.hpp"
#include "fxmimo/fixedpoint/requantize.hpp"
#include "fxmimo/fixedpoint/words.hpp"
#include "fxmimo/golden/checked_table.hpp"
#include "fxmimo/golden/trial.hpp"

namespace fp = fxmimo::fixedpoint;
namespace dp = fxmimo::datapath;

namespace {

thread_local std::string last_error;

/// Runs `body`; an exception becomes last_error and the return value `failed`.
template <class R, class F>
R guarded(R failed, F&& body) {
  try {
    last_error.clear();
    return body();
  } catch (const std::exception& e) {
    last_error = e.what();
  } catch (...) {
    last_error = "unknown error";
  }
  return failed;
}

fp::target target_of(const char* format, const char* rounding, const char* overflow) {
  if (format == nullptr || rounding == nullptr || overflow == nullptr) throw std::invalid_argument("null argument");
  fp::target t;
  t.fmt = fp::parse_format(format);
  const auto r = fp::parse_rounding_mode(rounding);
  const auto o = fp::parse_overflow_mode(overflow);
  if (!r) throw std::invalid_argument(fmt::format("unknown rounding '{}'", rounding));
  if (!o) throw std::invalid_argument(fmt::format("unknown overflow '{}'", overflow));
  t.rounding = *r;
  t.overflow = *o;
  if (t.fmt.container_bits() > 64) throw std::invalid_argument(fmt::format("{}: wider than 64 bits", format));
  return t;
}

fp::format word_format(const char* format) {
  if (format == nullptr) throw std::invalid_argument("null format");
  const fp::format f = fp::parse_format(format);
  if (f.container_bits() > 64) throw std::invalid_argument(fmt::format("{}: wider than 64 bits", format));
  return f;
}

/// The word's value must lie in its format (a caller's slip otherwise).
void check_in_format(std::int64_t word, const fp::format& f) {
  const std::int64_t lo = f.is_signed ? -(std::int64_t{1} << (f.word_bits - 1)) : 0;
  const std::int64_t hi = f.is_signed         ? (std::int64_t{1} << (f.word_bits - 1)) - 1
                          : f.word_bits == 64 ? INT64_MAX
                                              : (std::int64_t{1} << f.word_bits) - 1;
  if (word < lo || word > hi) {
    throw std::invalid_argument(fmt::format("word {} is outside {}", word, fp::to_q_string(f)));
  }
}

struct node_state {
  dp::node_id id;
  std::uint64_t checked = 0, mismatches = 0;
  std::string first;
};

struct model {
  dp::datapath_config config;
  dp::datapath_plan plan;
  dp::fixed_trial fixed;
  std::map<std::string, node_state> nodes;
  std::string scratch;  // what fxm_first_mismatch returns

  node_state& node(const char* name) {
    if (name == nullptr) throw std::invalid_argument("null node name");
    const auto it = nodes.find(name);
    if (it == nodes.end()) {
      throw std::invalid_argument(
          fmt::format("node '{}' is not in this scenario's datapath ({})", name, dp::list_node_names()));
    }
    return it->second;
  }
  const dp::word_matrix& words(const node_state& n) const { return fixed.words[dp::index_of(n.id)]; }
};

model& as_model(void* handle) {
  if (handle == nullptr) throw std::invalid_argument("null model handle");
  return *static_cast<model*>(handle);
}

std::size_t index_of(const dp::word_matrix& w, const char* node, int part, int row, int col) {
  if (part != 0 && part != 1) throw std::invalid_argument(fmt::format("part {} (0 real, 1 imaginary)", part));
  if (part == 1 && !w.is_complex) throw std::invalid_argument(fmt::format("node {} is real: no part 1", node));
  if (row < 0 || row >= w.rows || col < 0 || col >= w.cols) {
    throw std::invalid_argument(fmt::format("({}, {}) is outside node {} ({} x {})", row, col, node, w.rows, w.cols));
  }
  return w.at(row, col);
}

}  // namespace

extern "C" {

const char* fxm_last_error(void) { return last_error.c_str(); }

int fxm_requantize(const char* from_format, int64_t word, const char* to_format, const char* rounding,
                   const char* overflow, int64_t* result) {
  return guarded(-1, [&] {
    const fp::format from = word_format(from_format);
    check_in_format(word, from);
    const fp::target to = target_of(to_format, rounding, overflow);
    if (result == nullptr) throw std::invalid_argument("null result");
    fp::counters c;
    *result = static_cast<int64_t>(fp::requantize<fp::int128>(fp::int128{word}, from.frac_bits, to, c));
    return c.overflowed > 0 ? 1 : 0;
  });
}

int64_t fxm_requantize_array(const char* from_format, const int64_t* words, const char* to_format, const char* rounding,
                             const char* overflow, int64_t* results, int64_t count) {
  return guarded(int64_t{-1}, [&] {
    const fp::format from = word_format(from_format);
    const fp::target to = target_of(to_format, rounding, overflow);
    if (count < 0 || (count > 0 && (words == nullptr || results == nullptr))) {
      throw std::invalid_argument("bad array arguments");
    }
    const fp::requantizer<fp::int128> q(to);
    fp::counters c;
    for (int64_t i = 0; i < count; ++i) {
      check_in_format(words[i], from);
      results[i] = static_cast<int64_t>(q(fp::int128{words[i]}, from.frac_bits, c));
    }
    return static_cast<int64_t>(c.overflowed);
  });
}

void* fxm_model_open(const char* scenario_path, int64_t trial) {
  return guarded(static_cast<void*>(nullptr), [&]() -> void* {
    if (scenario_path == nullptr) throw std::invalid_argument("null scenario path");
    std::ifstream in(scenario_path, std::ios::binary);
    if (!in) throw std::invalid_argument(fmt::format("{}: cannot open the scenario file", scenario_path));
    std::ostringstream text;
    text << in.rdbuf();
    const auto doc = fxmimo::golden::parse_scenario_document(text.str(), scenario_path);
    const auto scen = fxmimo::golden::parse_scenario(doc);
    if (trial < 0 || trial >= scen.num_trials) {
      throw std::invalid_argument(fmt::format("trial {} is outside the scenario's {} trials (0..{})", trial,
                                              scen.num_trials, scen.num_trials - 1));
    }
    auto m = std::make_unique<model>();
    m->config = dp::parse_datapath_config(doc);
    m->plan = dp::stages_for(scen);
    const auto golden = fxmimo::golden::run_trial(scen, static_cast<std::uint64_t>(trial));
    m->fixed = dp::run_fixed_datapath(m->plan, scen, m->config, golden);
    for (dp::node_id id : m->plan.nodes()) m->nodes[std::string(dp::node_name(id))] = {id, 0, 0, ""};
    return m.release();
  });
}

void fxm_model_close(void* handle) { delete static_cast<model*>(handle); }

int fxm_node_shape(void* handle, const char* node, int* rows, int* cols, int* is_complex) {
  return guarded(-1, [&] {
    model& m = as_model(handle);
    const dp::word_matrix& w = m.words(m.node(node));
    if (rows == nullptr || cols == nullptr || is_complex == nullptr) throw std::invalid_argument("null output");
    *rows = w.rows;
    *cols = w.cols;
    *is_complex = w.is_complex ? 1 : 0;
    return 0;
  });
}

int fxm_node_format(void* handle, const char* node, int* word_bits, int* frac_bits, int* is_signed) {
  return guarded(-1, [&] {
    model& m = as_model(handle);
    const fp::format& f = m.config[m.node(node).id].spec.fmt;
    if (word_bits == nullptr || frac_bits == nullptr || is_signed == nullptr)
      throw std::invalid_argument("null output");
    *word_bits = f.word_bits;
    *frac_bits = f.frac_bits;
    *is_signed = f.is_signed ? 1 : 0;
    return 0;
  });
}

int fxm_node_word(void* handle, const char* node, int part, int row, int col, int64_t* word) {
  return guarded(-1, [&] {
    model& m = as_model(handle);
    const dp::word_matrix& w = m.words(m.node(node));
    const std::size_t i = index_of(w, node, part, row, col);
    if (word == nullptr) throw std::invalid_argument("null output");
    *word = part == 0 ? w.re[i] : w.im[i];
    return 0;
  });
}

int fxm_check_word(void* handle, const char* node, int part, int row, int col, int64_t dut_word) {
  return guarded(-1, [&] {
    model& m = as_model(handle);
    node_state& n = m.node(node);
    const dp::word_matrix& w = m.words(n);
    const std::size_t i = index_of(w, node, part, row, col);
    const std::int64_t expected = part == 0 ? w.re[i] : w.im[i];
    const fp::format& f = m.config[n.id].spec.fmt;
    // Compare the W low bits: a bench may pass the raw pattern or the sign-extended word.
    const std::uint64_t mask = f.word_bits >= 64 ? ~std::uint64_t{0} : (std::uint64_t{1} << f.word_bits) - 1;
    const bool equal = (static_cast<std::uint64_t>(expected) & mask) == (static_cast<std::uint64_t>(dut_word) & mask);
    ++n.checked;
    if (!equal) {
      if (++n.mismatches == 1) {
        const std::array<dp::dim, 2> dims = dp::dims_of(n.id);
        const std::string where = dims[1] == dp::dim::one ? fmt::format("{}={}", m.plan.dims.name(dims[0]), row)
                                                          : fmt::format("{}={}, {}={}", m.plan.dims.name(dims[0]), row,
                                                                        m.plan.dims.name(dims[1]), col);
        n.first = fmt::format(
            "{}[{}]{}: expected 0x{} ({}), got 0x{}", node, where, w.is_complex ? (part == 0 ? ".re" : ".im") : "",
            fp::to_hex_word(expected, f.word_bits), expected,
            fp::to_hex_word(static_cast<std::int64_t>(static_cast<std::uint64_t>(dut_word) & mask), f.word_bits));
      }
      return 0;
    }
    return 1;
  });
}

int64_t fxm_checked(void* handle, const char* node) {
  return guarded(int64_t{-1}, [&] { return static_cast<int64_t>(as_model(handle).node(node).checked); });
}

int64_t fxm_mismatches(void* handle, const char* node) {
  return guarded(int64_t{-1}, [&] { return static_cast<int64_t>(as_model(handle).node(node).mismatches); });
}

const char* fxm_first_mismatch(void* handle, const char* node) {
  return guarded(static_cast<const char*>(""), [&] {
    model& m = as_model(handle);
    m.scratch = m.node(node).first;
    return m.scratch.c_str();
  });
}

}  // extern "C"
