#include "fxmimo/analysis/trial_cache.hpp"

#include <algorithm>
#include <limits>

#include "fxmimo/analysis/resources.hpp"
#include "fxmimo/datapath/block_float.hpp"
#include "fxmimo/golden/precoder.hpp"

namespace fxmimo::analysis {

namespace {

double matrix_bytes(const Eigen::MatrixXcd& m) { return 16.0 * static_cast<double>(m.size()); }

}  // namespace

golden_part make_golden_part(const datapath::datapath_plan& plan, const golden::scenario& scen,
                             std::uint64_t trial_index, bool keep_data) {
  golden_part g;
  g.trial = golden::run_trial(scen, trial_index);
  g.node_values = datapath::golden_block_values(plan, scen, g.trial);
  // The condition of the Gram the inverter works on (D^-1 G D^-1 under block floating point).
  if (g.trial.gram.size() > 0)
    g.gram_condition = golden::condition_number(datapath::inverter_gram(plan, g.node_values));
  if (keep_data) {
    golden::data_stream stream(scen, g.trial);
    golden::data_block block;
    while (stream.next(block)) {
      g.block_values.emplace_back();
      datapath::golden_data_values(plan, scen, g.trial, block, g.node_values, g.block_values.back());
      g.blocks.push_back(std::move(block));
      block = golden::data_block();
    }
  }
  return g;
}

double kept_data_bytes(const golden::scenario& scen) {
  const auto m = static_cast<double>(scen.array.num_antennas), k = static_cast<double>(scen.cells.num_users);
  const auto n = static_cast<double>(scen.data.num_symbols);
  // Per symbol: labels (4 bytes) and symbols, tx, the other cells' signal; the golden values of
  // the data nodes (symbols, tx_acc, dac: K + 2 M) and room for a custom data node of M.
  return n * (4.0 * k + 16.0 * (k + m + k) + 16.0 * (k + 3.0 * m));
}

double bytes_of(const golden_part& g) {
  const golden::trial_data& t = g.trial;
  double bytes = 0;
  for (const Eigen::MatrixXcd* m :
       {&t.adc, &t.pilots, &t.pilot_acc, &t.chan_est, &t.gram, &t.inverse, &t.precoder, &t.weights})
    bytes += matrix_bytes(*m);
  for (const auto* cells : {&t.channel_to_cell0, &t.cell_precoder, &t.cross_gain})
    for (const Eigen::MatrixXcd& m : *cells) bytes += matrix_bytes(m);
  for (const golden::label_rows& cell : t.cell_labels)
    bytes += static_cast<double>(sizeof(golden::random_stream) * cell.rows.size());
  for (const Eigen::MatrixXcd& m : g.node_values) bytes += matrix_bytes(m);
  for (const golden::data_block& b : g.blocks) {
    bytes += 4.0 * static_cast<double>(b.labels.size()) + matrix_bytes(b.symbols) + matrix_bytes(b.tx) +
             matrix_bytes(b.interference);
  }
  for (const auto& values : g.block_values)
    for (const Eigen::MatrixXcd& m : values) bytes += matrix_bytes(m);
  return bytes;
}

double bytes_of(const fixed_part& f) {
  double bytes = 0;
  for (const datapath::word_matrix& w : f.fixed.words) bytes += 8.0 * static_cast<double>(w.re.size() + w.im.size());
  for (const auto& block : f.data_words)
    for (const datapath::word_matrix& w : block) bytes += 8.0 * static_cast<double>(w.re.size() + w.im.size());
  return bytes;
}

double default_cache_budget_bytes() {
  constexpr double fallback = 2.0 * 1024 * 1024 * 1024;
  return available_memory_bytes().value_or(4 * fallback) / 4;
}

trial_cache::trial_cache(const golden::scenario& scen, double budget_bytes, std::size_t evaluations_per_trial)
    : scen_(scen),
      plan_(datapath::stages_for(scen)),
      budget_bytes_(budget_bytes),
      evaluations_per_trial_(evaluations_per_trial) {}

std::shared_ptr<const golden_part> trial_cache::golden(std::uint64_t trial_index) {
  {
    const std::lock_guard lock(mutex_);
    if (const auto it = golden_.find(trial_index); it != golden_.end()) {
      ++stats_.golden_reused;
      return it->second;
    }
  }
  // The data phase is kept too where it fits beside what is kept already (its estimate plus a
  // trial's), so that evaluations do not regenerate it. Computed outside the lock, so that
  // threads work on their trials at once.
  bool keep_data = false;
  {
    const std::lock_guard lock(mutex_);
    keep_data = stats_.bytes_kept + kept_data_bytes(scen_) + trial_memory_bytes(scen_).amount <= budget_bytes_;
  }
  auto made = std::make_shared<const golden_part>(make_golden_part(plan_, scen_, trial_index, keep_data));
  const double bytes = bytes_of(*made);
  const std::lock_guard lock(mutex_);
  ++stats_.golden_computed;
  if (stats_.bytes_kept + bytes <= budget_bytes_ && golden_.emplace(trial_index, made).second)
    stats_.bytes_kept += bytes;
  return made;
}

std::shared_ptr<const fixed_part> trial_cache::nearest(std::uint64_t trial_index,
                                                       const datapath::datapath_config& config) const {
  std::vector<std::shared_ptr<const fixed_part>> kept;
  {
    const std::lock_guard lock(mutex_);
    const auto it = fixed_.find(trial_index);
    if (it == fixed_.end()) return nullptr;
    kept.assign(it->second.begin(), it->second.end());
  }
  std::shared_ptr<const fixed_part> best;
  std::size_t best_run = std::numeric_limits<std::size_t>::max();
  for (auto it = kept.rbegin(); it != kept.rend(); ++it) {  // the most recent first
    const std::vector<bool> dirty = plan_.stages_downstream_of(datapath::changed_nodes(plan_, config, (*it)->config));
    const auto run = static_cast<std::size_t>(std::count(dirty.begin(), dirty.end(), true));
    if (run < best_run) {
      best_run = run;
      best = *it;
    }
  }
  return best;
}

void trial_cache::keep(std::uint64_t trial_index, std::shared_ptr<const fixed_part> evaluation) {
  if (evaluations_per_trial_ == 0) return;
  const double bytes = bytes_of(*evaluation);
  const std::lock_guard lock(mutex_);
  std::deque<std::shared_ptr<const fixed_part>>& kept = fixed_[trial_index];
  if (kept.size() == evaluations_per_trial_) {
    stats_.bytes_kept -= bytes_of(*kept.front());
    kept.pop_front();
  }
  if (stats_.bytes_kept + bytes > budget_bytes_) return;
  kept.push_back(std::move(evaluation));
  stats_.bytes_kept += bytes;
}

void trial_cache::count_evaluation(bool incremental, std::size_t nodes_run, std::size_t nodes_reused) {
  const std::lock_guard lock(mutex_);
  ++(incremental ? stats_.evaluations_incremental : stats_.evaluations_full);
  stats_.nodes_run += nodes_run;
  stats_.nodes_reused += nodes_reused;
}

cache_statistics trial_cache::statistics() const {
  const std::lock_guard lock(mutex_);
  return stats_;
}

}  // namespace fxmimo::analysis
