#include "fxmimo/analysis/runner.hpp"

#include <fmt/core.h>

#include <algorithm>
#include <atomic>
#include <cmath>
#include <limits>
#include <mutex>
#include <thread>

#include "fxmimo/analysis/processes.hpp"
#include "fxmimo/analysis/resources.hpp"
#include "fxmimo/analysis/statistics.hpp"
#include "fxmimo/analysis/trial_cache.hpp"
#include "fxmimo/datapath/block_float.hpp"
#include "fxmimo/golden/gauss_seidel.hpp"
#include "fxmimo/golden/link_metrics.hpp"
#include "fxmimo/golden/precoder.hpp"
#include "fxmimo/golden/trial.hpp"
#include "fxmimo/golden/uplink.hpp"
#include "wire.hpp"

namespace fxmimo::analysis {

double node_result::sqnr_db() const {
  if (error_energy == 0.0) return std::numeric_limits<double>::infinity();
  return 10.0 * std::log10(signal_energy / error_energy);
}

double node_result::overflow_rate() const {
  return counters.requantized == 0
             ? 0.0
             : static_cast<double>(counters.overflowed) / static_cast<double>(counters.requantized);
}

void node_result::absorb(const node_result& other) {
  signal_energy += other.signal_energy;
  error_energy += other.error_energy;
  num_values += other.num_values;
  max_err_lsb = std::max(max_err_lsb, other.max_err_lsb);
  max_abs_golden = std::max(max_abs_golden, other.max_abs_golden);
  counters.merge(other.counters);
}

double node_result::overflow_rate_bound() const { return rate_upper_bound(counters.overflowed, counters.requantized); }

double max_overflow_rate(const run_results& r) {
  double worst = 0.0;
  for (const node_result& n : r.nodes)
    if (!n.clips()) worst = std::max(worst, n.overflow_rate());
  return worst;
}

double sinr_loss_statistic(const run_results& r, std::optional<double> pct) {
  if (!pct) return r.summary.sinr_loss_db;
  if (*pct == 5) return r.distribution.sinr_loss_p5_db;
  if (*pct == 50) return r.distribution.sinr_loss_p50_db;
  if (*pct == 95) return r.distribution.sinr_loss_p95_db;
  // Between the kept whole percentiles, linearly (the kept values are the definition-7
  // percentiles at whole percent, so whole percents are exact).
  const std::vector<double>& q = r.distribution.sinr_loss_percentiles_db;
  if (q.size() != 101) throw std::logic_error("no SINR-loss percentiles kept");
  const double h = std::clamp(*pct, 0.0, 100.0);
  const auto lo = static_cast<std::size_t>(std::floor(h));
  const std::size_t hi = std::min<std::size_t>(lo + 1, 100);
  return q[lo] + (h - static_cast<double>(lo)) * (q[hi] - q[lo]);
}

std::optional<double> bs_evm_limit_pct(golden::modulation mod) {
  switch (mod) {
    case golden::modulation::qpsk: return 17.5;
    case golden::modulation::qam16: return 12.5;
    case golden::modulation::qam64: return 8.0;
    case golden::modulation::qam256: return 3.5;
    case golden::modulation::qam1024: return 2.5;
  }
  return std::nullopt;
}

std::vector<std::uint64_t> first_trials(int n) {
  std::vector<std::uint64_t> out(static_cast<std::size_t>(std::max(n, 0)));
  for (std::size_t i = 0; i < out.size(); ++i) out[i] = i;
  return out;
}

namespace {

/// A node's error and overflow figures in one trial.
node_result measure_node(datapath::node_id id, const datapath::node_setting& setting, const fixedpoint::counters& c,
                         const Eigen::MatrixXcd& g, const datapath::word_matrix& w) {
  node_result r;
  r.id = id;
  r.spec = setting.spec;
  r.is_default = setting.is_default;
  r.counters = c;
  if (g.rows() != w.rows || g.cols() != w.cols) {
    throw std::logic_error(fmt::format("node {}: golden {}x{} against fixed {}x{}", datapath::node_name(id), g.rows(),
                                       g.cols(), w.rows, w.cols));
  }
  const Eigen::MatrixXcd f = datapath::to_values(w, r.spec.fmt.frac_bits);
  const Eigen::MatrixXcd e = g - f;
  r.signal_energy = g.squaredNorm();
  r.error_energy = e.squaredNorm();
  r.num_values = static_cast<std::uint64_t>(g.size());
  const double max_abs = std::max(e.real().cwiseAbs().maxCoeff(), e.imag().cwiseAbs().maxCoeff());
  r.max_err_lsb = max_abs / r.spec.fmt.lsb();
  r.max_abs_golden = std::max(g.real().cwiseAbs().maxCoeff(), g.imag().cwiseAbs().maxCoeff());
  return r;
}

/// The uplink figures of one trial into `out`: the golden ones, and the fixed ones from ul_eq's
/// and ul_llr's words (or `earlier`'s, when those were not computed again).
void summarise_uplink(const golden::scenario& scen, const datapath::datapath_config& config,
                      const golden::uplink_data& ul, const datapath::fixed_trial& fixed, const trial_summary* earlier,
                      trial_summary& out) {
  const golden::uplink_metrics& g = ul.metrics;
  out.ul_sinr_golden = g.sinr;
  out.ul_evm_golden_pct = g.evm_pct;
  out.ul_bits = g.bits * g.bit_errors.size();
  out.ul_bit_errors_golden = g.total_bit_errors;
  if (earlier != nullptr) {
    out.ul_sinr_fixed = earlier->ul_sinr_fixed;
    out.ul_evm_fixed_pct = earlier->ul_evm_fixed_pct;
    out.ul_bit_errors_fixed = earlier->ul_bit_errors_fixed;
    out.ul_llr_sign_flips = earlier->ul_llr_sign_flips;
    return;
  }
  using datapath::node_id;
  const Eigen::MatrixXcd eq =
      datapath::to_values(fixed.words[datapath::index_of(node_id::ul_eq)], config[node_id::ul_eq].spec.fmt.frac_bits);
  const golden::uplink_metrics f = golden::measure_uplink(scen.uplink.mod, eq, ul.symbols, ul.labels);
  out.ul_sinr_fixed = f.sinr;
  out.ul_evm_fixed_pct = f.evm_pct;
  out.ul_bit_errors_fixed = f.total_bit_errors;
  // A hard decision per LLR: bit 1 where it is negative (README "The uplink").
  const datapath::word_matrix& llr = fixed.words[datapath::index_of(node_id::ul_llr)];
  for (int k = 0; k < llr.rows; ++k)
    for (int c = 0; c < llr.cols; ++c)
      out.ul_llr_sign_flips += static_cast<std::uint64_t>((llr.re[llr.at(k, c)] < 0) != (ul.distances(k, c) < 0));
}

/// The figures of one trial from its golden part and the words of its stages outside the data
/// phase (`fixed`, from run_block_stages or rerun_block_stages); the data phase is computed
/// here, block by block, into `fixed`'s data nodes, which are emptied at the end (a kept
/// evaluation holds no data-phase words in `fixed`). With `earlier` (an evaluation of the same
/// trial) and `recomputed` (per node), the figures of nodes not recomputed are copied from it:
/// the same words give the same figures; where `earlier` kept its data words, only the data
/// stages downstream of a change run, on its words. With `keep_words`, the data words of every
/// block are kept there.
trial_summary summarise_trial(const datapath::datapath_plan& plan, const golden::scenario& scen,
                              const datapath::datapath_config& config, const golden_part& g,
                              datapath::fixed_trial& fixed, const fixed_part* earlier,
                              const std::vector<bool>* recomputed,
                              std::vector<std::vector<datapath::word_matrix>>* keep_words) {
  const golden::trial_data& trial = g.trial;
  auto again = [&](datapath::node_id id) { return earlier == nullptr || (*recomputed)[datapath::index_of(id)]; };
  const std::vector<bool> data_stage = plan.data_stages(), data_node = plan.data_nodes();
  std::vector<datapath::node_id> data_nodes;  // in plan order
  for (datapath::node_id id : plan.nodes())
    if (data_node[datapath::index_of(id)]) data_nodes.push_back(id);
  std::vector<bool> run_stage(plan.stages.size(), false);  // the data stages to run
  for (std::size_t i_stage = 0; i_stage < plan.stages.size(); ++i_stage) {
    if (!data_stage[i_stage]) continue;
    for (const datapath::port& p : plan.stages[i_stage]->ports())
      run_stage[i_stage] = run_stage[i_stage] || again(p.node);
  }
  const bool earlier_words = earlier != nullptr && !earlier->data_words.empty();
  if (!earlier_words) {
    for (std::size_t i_stage = 0; i_stage < plan.stages.size(); ++i_stage) run_stage[i_stage] = data_stage[i_stage];
  }
  const auto in_data_phase = [&](datapath::node_id id) { return data_node[datapath::index_of(id)]; };
  const auto measured_now = [&](datapath::node_id id) {
    return !in_data_phase(id) ? again(id) : !earlier_words || again(id);
  };
  trial_summary out;
  out.trial_index = trial.trial_index;
  out.nodes.resize(datapath::node_count());
  // A block-scaled node is measured on its words: its golden value at the scale of the fixed
  // exponents (README "Block floating point").
  const datapath::block_exponents exponents = datapath::has_block_float(plan)
                                                  ? datapath::fixed_block_exponents(plan, config, fixed.words)
                                                  : datapath::block_exponents{};
  for (datapath::node_id id : plan.nodes()) {
    const std::size_t i = datapath::index_of(id);
    if (in_data_phase(id) && measured_now(id)) {
      out.nodes[i].id = id;
    } else if (measured_now(id) && plan.law_of(id).carries()) {
      Eigen::MatrixXcd at_word_scale = g.node_values[i];
      datapath::apply_exponent_law(plan, id, at_word_scale, exponents, -1);
      out.nodes[i] = measure_node(id, config[id], fixed.counters[i], at_word_scale, fixed.words[i]);
    } else if (measured_now(id)) {
      out.nodes[i] = measure_node(id, config[id], fixed.counters[i], g.node_values[i], fixed.words[i]);
    } else {
      out.nodes[i] = earlier->summary.nodes[i];
    }
    out.nodes[i].spec = config[id].spec;
    out.nodes[i].is_default = config[id].is_default;
  }
  out.sinr_golden = trial.metrics.sinr;
  out.evm_golden_pct = trial.metrics.evm_pct;
  if (trial.uplink) {
    const bool uplink_again = again(datapath::node_id::ul_eq) || again(datapath::node_id::ul_llr);
    summarise_uplink(scen, config, *trial.uplink, fixed, uplink_again ? nullptr : &earlier->summary, out);
  }
  out.neumann_radius = trial.neumann_radius;
  out.gauss_seidel_residual = trial.gauss_seidel_residual;
  out.gram_condition = g.gram_condition;

  // The data phase, block by block: its nodes' figures, the DAC block's alignment with the
  // golden block and the fixed block's link sums. Skipped where no data stage runs: then the
  // dac's words, and every figure taken from them, are the earlier evaluation's.
  const bool link_again = measured_now(datapath::node_id::dac);
  const std::size_t i_dac = datapath::index_of(datapath::node_id::dac);
  const int dac_frac = config[datapath::node_id::dac].spec.fmt.frac_bits;
  golden::link_sums link(scen.cells.num_users);
  golden::alignment_sums alignment;
  std::size_t i_block = 0;
  if (keep_words != nullptr) keep_words->clear();
  // A data stage that runs counts its outputs from zero, over every block.
  for (std::size_t i_stage = 0; i_stage < plan.stages.size(); ++i_stage) {
    if (!run_stage[i_stage]) continue;
    for (const datapath::port& p : plan.stages[i_stage]->ports()) fixed.counters[datapath::index_of(p.node)] = {};
  }
  auto consume = [&](const golden::data_block& block, const std::vector<Eigen::MatrixXcd>& values) {
    if (earlier_words) {
      for (datapath::node_id id : data_nodes)
        if (!again(id)) fixed.words[datapath::index_of(id)] = earlier->data_words[i_block][datapath::index_of(id)];
    }
    datapath::run_data_stages(plan, scen, config, trial, block, fixed, &run_stage);
    for (datapath::node_id id : data_nodes) {
      const std::size_t i = datapath::index_of(id);
      if (measured_now(id)) out.nodes[i].absorb(measure_node(id, config[id], {}, values[i], fixed.words[i]));
    }
    if (link_again) {
      const Eigen::MatrixXcd dac = datapath::to_values(fixed.words[i_dac], dac_frac);
      alignment.add(dac, block.tx);
      link.add(golden::own_received(trial, block, dac), block.interference, block.symbols);
    }
    if (keep_words != nullptr) {
      keep_words->emplace_back(datapath::node_count());
      for (datapath::node_id id : data_nodes)
        keep_words->back()[datapath::index_of(id)] = fixed.words[datapath::index_of(id)];
    }
    ++i_block;
  };
  if (std::none_of(run_stage.begin(), run_stage.end(), [](bool run) { return run; })) {
    // No data stage runs (only with earlier words): every data word is the earlier evaluation's.
    if (keep_words != nullptr) *keep_words = earlier->data_words;
  } else if (!g.blocks.empty()) {  // kept by the cache
    for (std::size_t b = 0; b < g.blocks.size(); ++b) consume(g.blocks[b], g.block_values[b]);
  } else {
    golden::data_stream stream(scen, trial);
    golden::data_block block;
    std::vector<Eigen::MatrixXcd> values;
    while (stream.next(block)) {
      datapath::golden_data_values(plan, scen, trial, block, g.node_values, values);
      consume(block, values);
    }
  }
  for (datapath::node_id id : data_nodes) {
    const std::size_t i = datapath::index_of(id);
    if (measured_now(id)) out.nodes[i].counters = fixed.counters[i];
    fixed.words[i] = datapath::word_matrix();
  }
  if (!link_again) {
    out.sinr_fixed = earlier->summary.sinr_fixed;
    out.evm_fixed_pct = earlier->summary.evm_fixed_pct;
    out.evm_impl = earlier->summary.evm_impl;
    out.tx_power_error_db = earlier->summary.tx_power_error_db;
    return out;
  }
  // The fixed block is evaluated at the golden block's transmitted power (a calibrated power
  // amplifier), so the SINR loss measures distortion; the power error is reported on its own.
  const double golden_power = alignment.golden_energy(), fixed_power = alignment.fixed_energy();
  const double power_scale = fixed_power > 0 ? std::sqrt(golden_power / fixed_power) : 1.0;
  out.tx_power_error_db = fixed_power > 0 ? 10 * std::log10(fixed_power / golden_power) : -300.0;
  const golden::link_metrics fixed_metrics = link.metrics(trial.amplitude, power_scale, 1.0);
  out.sinr_fixed = fixed_metrics.sinr;
  out.evm_fixed_pct = fixed_metrics.evm_pct;
  out.evm_impl = alignment.evm();
  return out;
}

}  // namespace

trial_summary evaluate_trial(const golden::scenario& scen, const datapath::datapath_config& config,
                             std::uint64_t trial_index) {
  const datapath::datapath_plan plan = datapath::stages_for(scen);
  const golden_part g = make_golden_part(plan, scen, trial_index);
  datapath::fixed_trial fixed = datapath::run_block_stages(plan, scen, config, g.trial);
  return summarise_trial(plan, scen, config, g, fixed, nullptr, nullptr, nullptr);
}

trial_summary evaluate_trial(trial_cache& cache, const datapath::datapath_config& config, std::uint64_t trial_index) {
  const datapath::datapath_plan& plan = cache.plan();
  const std::shared_ptr<const golden_part> g = cache.golden(trial_index);
  const std::shared_ptr<const fixed_part> earlier = cache.nearest(trial_index, config);
  auto now = std::make_shared<fixed_part>();
  now->config = config;
  std::vector<bool> recomputed;
  if (earlier) {
    now->fixed = datapath::rerun_block_stages(plan, cache.scenario(), config, g->trial, earlier->fixed, earlier->config,
                                              &recomputed);
  } else {
    now->fixed = datapath::run_block_stages(plan, cache.scenario(), config, g->trial);
  }
  // The data words are worth keeping where the data phase is kept (the budget is roomy).
  now->summary = summarise_trial(plan, cache.scenario(), config, *g, now->fixed, earlier.get(),
                                 earlier ? &recomputed : nullptr, g->blocks.empty() ? nullptr : &now->data_words);
  const std::size_t num_nodes = plan.nodes().size();
  const auto run =
      earlier ? static_cast<std::size_t>(std::count(recomputed.begin(), recomputed.end(), true)) : num_nodes;
  cache.count_evaluation(earlier != nullptr, run, num_nodes - run);
  trial_summary out = now->summary;
  cache.keep(trial_index, std::move(now));
  return out;
}

unsigned worker_count(std::size_t count, unsigned num_threads) {
  if (num_threads == 0) num_threads = std::max(1U, std::thread::hardware_concurrency());
  return static_cast<unsigned>(std::min<std::size_t>(num_threads, std::max<std::size_t>(count, 1)));
}

void for_each_index_parallel(std::size_t count, unsigned num_threads, const std::function<void(std::size_t)>& body,
                             const progress_callback& progress) {
  num_threads = worker_count(count, num_threads);
  std::atomic<std::size_t> next{0};
  std::atomic<std::size_t> done{0};
  std::mutex mutex;
  std::exception_ptr first_error;
  auto worker = [&] {
    for (std::size_t i = next++; i < count; i = next++) {
      try {
        throw_if_stop_requested();
        body(i);
      } catch (...) {
        const std::lock_guard lock(mutex);
        if (!first_error) first_error = std::current_exception();
        next = count;
        return;
      }
      const std::size_t finished = ++done;
      if (progress) {
        const std::lock_guard lock(mutex);
        progress(finished, count);
      }
    }
  };
  std::vector<std::thread> threads;
  for (unsigned t = 1; t < num_threads; ++t) threads.emplace_back(worker);
  worker();
  for (std::thread& t : threads) t.join();
  if (first_error) std::rethrow_exception(first_error);
}

namespace {

// Trial figures as processes exchange them (wire.hpp).
void put_trials(wire::writer& w, const std::vector<trial_summary>& trials) {
  static_assert(std::is_trivially_copyable_v<node_result>);
  w.put<std::uint64_t>(trials.size());
  for (const trial_summary& t : trials) {
    w.put(t.trial_index);
    w.put_vector(t.nodes);
    w.put_vector(t.sinr_golden);
    w.put_vector(t.sinr_fixed);
    w.put_vector(t.evm_golden_pct);
    w.put_vector(t.evm_fixed_pct);
    w.put(t.evm_impl);
    w.put(t.tx_power_error_db);
    w.put(t.neumann_radius);
    w.put(t.gauss_seidel_residual);
    w.put(t.gram_condition);
    w.put_vector(t.ul_sinr_golden);
    w.put_vector(t.ul_sinr_fixed);
    w.put_vector(t.ul_evm_golden_pct);
    w.put_vector(t.ul_evm_fixed_pct);
    w.put(t.ul_bits);
    w.put(t.ul_bit_errors_golden);
    w.put(t.ul_bit_errors_fixed);
    w.put(t.ul_llr_sign_flips);
  }
}

void get_trials(wire::reader& r, std::vector<trial_summary>& out) {
  const auto n = r.get<std::uint64_t>();
  for (std::uint64_t i = 0; i < n; ++i) {
    trial_summary t;
    t.trial_index = r.get<std::uint64_t>();
    t.nodes = r.get_vector<node_result>();
    t.sinr_golden = r.get_vector<double>();
    t.sinr_fixed = r.get_vector<double>();
    t.evm_golden_pct = r.get_vector<double>();
    t.evm_fixed_pct = r.get_vector<double>();
    t.evm_impl = r.get<double>();
    t.tx_power_error_db = r.get<double>();
    t.neumann_radius = r.get<double>();
    t.gauss_seidel_residual = r.get<double>();
    t.gram_condition = r.get<double>();
    t.ul_sinr_golden = r.get_vector<double>();
    t.ul_sinr_fixed = r.get_vector<double>();
    t.ul_evm_golden_pct = r.get_vector<double>();
    t.ul_evm_fixed_pct = r.get_vector<double>();
    t.ul_bits = r.get<std::uint64_t>();
    t.ul_bit_errors_golden = r.get<std::uint64_t>();
    t.ul_bit_errors_fixed = r.get<std::uint64_t>();
    t.ul_llr_sign_flips = r.get<std::uint64_t>();
    out.push_back(std::move(t));
  }
}

/// Evaluates every trial (on `num_threads` threads) into its own slot, in the order given. In a
/// process group (processes.hpp) this process evaluates its contiguous share and receives the
/// others', so every process holds every trial's figures in the order given.
std::vector<trial_summary> evaluate_each(const std::vector<std::uint64_t>& trial_indices, unsigned num_threads,
                                         const progress_callback& progress,
                                         const std::function<trial_summary(std::uint64_t)>& evaluate) {
  auto evaluate_range = [&](index_range share) {
    std::vector<trial_summary> per_trial(share.size());
    for_each_index_parallel(
        share.size(), num_threads, [&](std::size_t i) { per_trial[i] = evaluate(trial_indices[share.begin + i]); },
        progress);
    return per_trial;
  };
  if (!spread_over_processes()) return evaluate_range(all_indices(trial_indices.size()));
  const index_range share = own_share(trial_indices.size());
  const std::vector<std::string> shares = exchange_shares([&] {
    wire::writer w;
    put_trials(w, evaluate_range(share));
    return w.take();
  });
  std::vector<trial_summary> all;
  all.reserve(trial_indices.size());
  for (const std::string& bytes : shares) {
    wire::reader r(bytes);
    get_trials(r, all);
    if (!r.at_end()) throw std::logic_error("a share of trial figures has bytes after its trials");
  }
  if (all.size() != trial_indices.size()) throw std::logic_error("the shares do not hold every trial once");
  return all;
}

}  // namespace

std::vector<trial_summary> evaluate_trials(const golden::scenario& scen, const datapath::datapath_config& config,
                                           const std::vector<std::uint64_t>& trial_indices, unsigned num_threads,
                                           const progress_callback& progress) {
  return evaluate_each(trial_indices, num_threads, progress,
                       [&](std::uint64_t t) { return evaluate_trial(scen, config, t); });
}

// Every trial in its own slot, then reduced in trial order: the same sums in the same order for
// any thread count, with the cache or without, in one process or from shards.
run_results run_trials(const golden::scenario& scen, const datapath::datapath_config& config,
                       const std::vector<std::uint64_t>& trial_indices, unsigned num_threads,
                       const progress_callback& progress) {
  if (trial_indices.empty()) throw std::invalid_argument("no trials to run");
  return reduce_trials(scen, config, trial_indices,
                       evaluate_trials(scen, config, trial_indices, num_threads, progress));
}

run_results run_trials(trial_cache& cache, const datapath::datapath_config& config,
                       const std::vector<std::uint64_t>& trial_indices, unsigned num_threads,
                       const progress_callback& progress) {
  if (trial_indices.empty()) throw std::invalid_argument("no trials to run");
  return reduce_trials(cache.scenario(), config, trial_indices,
                       evaluate_each(trial_indices, num_threads, progress,
                                     [&](std::uint64_t t) { return evaluate_trial(cache, config, t); }));
}

namespace {

/// The uplink's figures over the trials, in trial order: per user the mean linear SINR (in dB)
/// and the RMS EVM, as the downlink's; the counts summed.
uplink_results reduce_uplink(const std::vector<trial_summary>& per_trial) {
  uplink_results out;
  const std::size_t num_users = per_trial.front().ul_sinr_golden.size();
  std::vector<double> sinr_g(num_users, 0.0), sinr_f(num_users, 0.0), evm_g2(num_users, 0.0), evm_f2(num_users, 0.0);
  for (const trial_summary& t : per_trial) {
    for (std::size_t k = 0; k < num_users; ++k) {
      sinr_g[k] += t.ul_sinr_golden[k];
      sinr_f[k] += t.ul_sinr_fixed[k];
      evm_g2[k] += t.ul_evm_golden_pct[k] * t.ul_evm_golden_pct[k];
      evm_f2[k] += t.ul_evm_fixed_pct[k] * t.ul_evm_fixed_pct[k];
    }
    out.bits += t.ul_bits;
    out.bit_errors_golden += t.ul_bit_errors_golden;
    out.bit_errors_fixed += t.ul_bit_errors_fixed;
    out.llrs += t.ul_bits;
    out.llr_sign_flips += t.ul_llr_sign_flips;
  }
  const double n = static_cast<double>(per_trial.size()), nu = static_cast<double>(num_users);
  double evm_g_sum2 = 0, evm_f_sum2 = 0;
  for (std::size_t k = 0; k < num_users; ++k) {
    user_result u;
    u.sinr_golden_db = 10 * std::log10(sinr_g[k] / n);
    u.sinr_fixed_db = 10 * std::log10(sinr_f[k] / n);
    u.evm_golden_pct = std::sqrt(evm_g2[k] / n);
    u.evm_fixed_pct = std::sqrt(evm_f2[k] / n);
    out.sinr_golden_db += u.sinr_golden_db / nu;
    out.sinr_fixed_db += u.sinr_fixed_db / nu;
    out.sinr_loss_db += u.sinr_loss_db() / nu;
    evm_g_sum2 += u.evm_golden_pct * u.evm_golden_pct;
    evm_f_sum2 += u.evm_fixed_pct * u.evm_fixed_pct;
    out.users.push_back(u);
  }
  out.evm_golden_pct = std::sqrt(evm_g_sum2 / nu);
  out.evm_fixed_pct = std::sqrt(evm_f_sum2 / nu);
  return out;
}

}  // namespace

run_results reduce_trials(const golden::scenario& scen, const datapath::datapath_config& config,
                          const std::vector<std::uint64_t>& trial_indices,
                          const std::vector<trial_summary>& per_trial) {
  if (per_trial.empty()) throw std::invalid_argument("no trials to run");
  if (per_trial.size() != trial_indices.size())
    throw std::logic_error(fmt::format("{} trial figures for {} trials", per_trial.size(), trial_indices.size()));
  run_results out;
  out.scenario_name = scen.name;
  out.scenario_source = scen.source_name;
  out.trial_indices = trial_indices;
  const std::vector<datapath::node_id> active = datapath::active_nodes(scen);
  const std::size_t num_users = per_trial.front().sinr_golden.size();
  std::vector<double> sinr_g(num_users, 0.0), sinr_f(num_users, 0.0), evm_g2(num_users, 0.0), evm_f2(num_users, 0.0);
  double impl2 = 0.0, power_error_sum = 0.0, power_error_max = 0.0, power_error2 = 0.0;
  std::size_t outside_convergence = 0, gauss_seidel_unconverged = 0;
  std::vector<node_result> totals(datapath::node_count());
  for (const trial_summary& t : per_trial) {
    for (datapath::node_id id : active) {
      node_result& total = totals[datapath::index_of(id)];
      const node_result& r = t.nodes[datapath::index_of(id)];
      total.id = r.id;
      total.spec = r.spec;
      total.is_default = r.is_default;
      total.absorb(r);
    }
    for (std::size_t k = 0; k < num_users; ++k) {
      sinr_g[k] += t.sinr_golden[k];
      sinr_f[k] += t.sinr_fixed[k];
      evm_g2[k] += t.evm_golden_pct[k] * t.evm_golden_pct[k];
      evm_f2[k] += t.evm_fixed_pct[k] * t.evm_fixed_pct[k];
    }
    impl2 += t.evm_impl * t.evm_impl;
    power_error_sum += t.tx_power_error_db;
    power_error2 += t.tx_power_error_db * t.tx_power_error_db;
    power_error_max = std::max(power_error_max, std::abs(t.tx_power_error_db));
    if (t.neumann_radius >= 1.0) ++outside_convergence;
    if (t.gauss_seidel_residual > golden::gauss_seidel_residual_limit) ++gauss_seidel_unconverged;
  }
  for (datapath::node_id id : active) out.nodes.push_back(totals[datapath::index_of(id)]);
  const double n = static_cast<double>(per_trial.size());
  double loss_sum = 0, g_sum = 0, f_sum = 0, evm_g_sum2 = 0, evm_f_sum2 = 0;
  for (std::size_t k = 0; k < num_users; ++k) {
    user_result u;
    u.sinr_golden_db = 10 * std::log10(sinr_g[k] / n);
    u.sinr_fixed_db = 10 * std::log10(sinr_f[k] / n);
    u.evm_golden_pct = std::sqrt(evm_g2[k] / n);
    u.evm_fixed_pct = std::sqrt(evm_f2[k] / n);
    loss_sum += u.sinr_loss_db();
    g_sum += u.sinr_golden_db;
    f_sum += u.sinr_fixed_db;
    evm_g_sum2 += u.evm_golden_pct * u.evm_golden_pct;
    evm_f_sum2 += u.evm_fixed_pct * u.evm_fixed_pct;
    out.users.push_back(u);
  }
  const double nu = static_cast<double>(num_users);
  out.summary.sinr_golden_db = g_sum / nu;
  out.summary.sinr_fixed_db = f_sum / nu;
  out.summary.sinr_loss_db = loss_sum / nu;
  out.summary.evm_golden_pct = std::sqrt(evm_g_sum2 / nu);
  out.summary.evm_fixed_pct = std::sqrt(evm_f_sum2 / nu);
  out.summary.evm_impl_pct = 100.0 * std::sqrt(impl2 / n);
  out.summary.evm_limit_pct = bs_evm_limit_pct(scen.data.mod);
  out.summary.tx_power_error_db = power_error_sum / n;
  out.summary.max_abs_tx_power_error_db = power_error_max;
  out.summary.rms_tx_power_error_db = std::sqrt(power_error2 / n);
  // Distributions over trials and users.
  std::vector<double> losses, impl, conditions;
  for (const trial_summary& t : per_trial) {
    for (std::size_t k = 0; k < num_users; ++k)
      losses.push_back(10 * std::log10(t.sinr_golden[k] / std::max(t.sinr_fixed[k], 1e-300)));
    impl.push_back(100.0 * t.evm_impl);
    if (t.gram_condition > 0) conditions.push_back(t.gram_condition);
  }
  run_distribution& dist = out.distribution;
  dist.sinr_loss_p5_db = percentile(losses, 0.05);
  dist.sinr_loss_p50_db = percentile(losses, 0.50);
  dist.sinr_loss_p95_db = percentile(losses, 0.95);
  for (int q = 0; q <= 100; ++q) dist.sinr_loss_percentiles_db.push_back(percentile(losses, q / 100.0));
  dist.evm_impl_p95_pct = percentile(impl, 0.95);
  dist.evm_impl_max_pct = *std::max_element(impl.begin(), impl.end());
  if (!conditions.empty()) {
    dist.gram_condition_p50 = percentile(conditions, 0.50);
    dist.gram_condition_p95 = percentile(conditions, 0.95);
    dist.gram_condition_max = *std::max_element(conditions.begin(), conditions.end());
    // The inverse's eigenvalues span the condition number kappa: its words resolve the weakest
    // and the strongest direction of G together only with more than log2(kappa) bits beside the
    // sign (README "Metrics").
    if (const datapath::node_id inv = datapath::node_id::inv_out;
        std::find(active.begin(), active.end(), inv) != active.end()) {
      const int w = config[inv].spec.fmt.word_bits - (config[inv].spec.fmt.is_signed ? 1 : 0);
      if (std::log2(*dist.gram_condition_p95) > w) {
        out.warnings.push_back(fmt::format(
            "the Gram's condition number reaches {:.3g} in 5 % of trials (2^{:.1f}): more than node inv_out's {} "
            "magnitude bits can resolve",
            *dist.gram_condition_p95, std::log2(*dist.gram_condition_p95), w));
      }
    }
  }
  if (outside_convergence > 0) {
    out.warnings.push_back(fmt::format(
        "Neumann series outside its convergence region (spectral radius of I - D^-1 G >= 1) in {} of {} trials: "
        "the inverse is not approximated there; use more antennas per user or inversion = \"ldl\"",
        outside_convergence, per_trial.size()));
  }
  if (gauss_seidel_unconverged > 0) {
    out.warnings.push_back(fmt::format(
        "Gauss-Seidel inverse not converged after {} sweeps in {} of {} trials (golden residual ||I - G X||_F / "
        "sqrt(K) above {:g}): use more sweeps, more antennas per user or inversion = \"cholesky\"",
        scen.precoder.gauss_seidel_sweeps, gauss_seidel_unconverged, per_trial.size(),
        golden::gauss_seidel_residual_limit));
  }
  if (scen.uplink.on) out.uplink = reduce_uplink(per_trial);
  for (const node_result& r : out.nodes) {
    if (r.counters.overflowed > 0 && !r.clips()) {
      out.warnings.push_back(fmt::format("node {} overflowed {} times ({:.3g} of its values)",
                                         datapath::node_name(r.id), r.counters.overflowed, r.overflow_rate()));
    }
  }
  return out;
}

}  // namespace fxmimo::analysis
