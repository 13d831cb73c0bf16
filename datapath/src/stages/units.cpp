#include "units.hpp"

#include <cmath>
#include <stdexcept>

#include "fxmimo/fixedpoint/divide.hpp"

namespace fxmimo::datapath::detail {

namespace {

bool is_reciprocal(fp::newton_function f) { return f == fp::newton_function::reciprocal; }

/// The size of a unit's entry or step dimension.
void set_dim(dimension_sizes& dims, dim d, int size) {
  switch (d) {
    case dim::recip_entry: dims.recip_entry = size; return;
    case dim::recip_step: dims.recip_step = size; return;
    case dim::rsqrt_entry: dims.rsqrt_entry = size; return;
    case dim::rsqrt_step: dims.rsqrt_step = size; return;
    case dim::chol_rsqrt_entry: dims.chol_rsqrt_entry = size; return;
    case dim::chol_rsqrt_step: dims.chol_rsqrt_step = size; return;
    default: throw std::logic_error("divide_root_unit: a unit's ROM or step node has another dimension");
  }
}

}  // namespace

divide_root_unit::divide_root_unit(fp::newton_function function, const golden::unit_choice& choice,
                                   const unit_nodes& nodes)
    : function_(function),
      choice_(choice),
      output_(nodes.output),
      rom_(nodes.rom),
      mant_(nodes.mant),
      square_(nodes.square),
      prod_(nodes.prod),
      iter_(nodes.iter) {}

node_id divide_root_unit::output() const { return output_; }

std::vector<port> divide_root_unit::ports(node_id input) const {
  if (!choice_.newton) return {{output(), {input}}};
  std::vector<port> p{{rom_, {}}, {mant_, {input}}};
  if (choice_.steps == 0) {
    p.push_back({output(), {input, rom_}});
    return p;
  }
  if (is_reciprocal(function_)) {
    p.push_back({prod_, {mant_, rom_, iter_}});
    p.push_back({iter_, {rom_, prod_}});
  } else {
    p.push_back({square_, {rom_, iter_}});
    p.push_back({prod_, {mant_, square_}});
    p.push_back({iter_, {rom_, prod_}});
  }
  p.push_back({output(), {input, iter_}});
  return p;
}

void divide_root_unit::set_dims(dimension_sizes& dims) const {
  const int entries = choice_.newton ? 1 << choice_.seed_bits : 0;
  const int steps = choice_.newton ? choice_.steps : 0;
  set_dim(dims, dims_of(rom_)[0], entries);
  set_dim(dims, dims_of(prod_)[1], steps);
}

divide_root_unit::session divide_root_unit::start(fixed_context& ctx, int num_values) const {
  session s;
  if (!choice_.newton) return s;
  s.unit.function = function_;
  s.unit.seed_bits = choice_.seed_bits;
  s.unit.steps = choice_.steps;
  s.mant = state(ctx, mant_);
  node_state rom = state(ctx, rom_);
  s.unit.mant = s.mant.spec;
  s.unit.rom = rom.spec;
  s.rom = fp::newton_rom(s.unit, *rom.counters);
  *rom.words = word_matrix(static_cast<int>(s.rom.size()), 1, false);
  rom.words->re.assign(s.rom.begin(), s.rom.end());
  *s.mant.words = word_matrix(num_values, 1, false);
  if (choice_.steps == 0) return s;
  s.prod = state(ctx, prod_);
  s.iter = state(ctx, iter_);
  s.unit.prod = s.prod.spec;
  s.unit.iter = s.iter.spec;
  *s.prod.words = word_matrix(num_values, choice_.steps, false);
  *s.iter.words = word_matrix(num_values, choice_.steps, false);
  if (!is_reciprocal(function_)) {
    s.square = state(ctx, square_);
    s.unit.square = s.square.spec;
    *s.square.words = word_matrix(num_values, choice_.steps, false);
  }
  return s;
}

word divide_root_unit::evaluate(session& s, int i, word x, int x_frac, node_state& out) const {
  if (!choice_.newton) {
    return is_reciprocal(function_) ? fp::divide<word>(1, 0, x, x_frac, out.spec, *out.counters)
                                    : fp::rsqrt<word>(x, x_frac, out.spec, *out.counters);
  }
  fp::newton_trace t;
  const word y = fp::newton_evaluate(s.unit, s.rom, x, x_frac, out.spec, *out.counters, s.counts, t);
  s.mant.words->re[static_cast<std::size_t>(i)] = t.mant;
  for (int k = 0; k < choice_.steps; ++k) {
    const auto ks = static_cast<std::size_t>(k);
    s.prod.words->re[s.prod.words->at(i, k)] = t.prod[ks];
    s.iter.words->re[s.iter.words->at(i, k)] = t.iter[ks];
    if (!is_reciprocal(function_)) s.square.words->re[s.square.words->at(i, k)] = t.square[ks];
  }
  return y;
}

void divide_root_unit::finish(session& s) const {
  if (!choice_.newton) return;
  s.mant.counters->merge(s.counts.mant);
  if (choice_.steps == 0) return;
  s.prod.counters->merge(s.counts.prod);
  s.iter.counters->merge(s.counts.iter);
  if (!is_reciprocal(function_)) s.square.counters->merge(s.counts.square);
}

void divide_root_unit::golden_view(golden_context& ctx, const Eigen::VectorXd& inputs) const {
  if (!choice_.newton) return;
  const int a = choice_.seed_bits, entries = 1 << a, steps = choice_.steps;
  Eigen::VectorXd rom(entries);
  for (int i = 0; i < entries; ++i) {
    if (is_reciprocal(function_)) {
      rom(i) = std::ldexp(1.0, a + 2) / ((1 << (a + 1)) + 2 * i + 1);
    } else {
      const int h = i >= entries / 2 ? 1 : 0, j = i - h * entries / 2;
      rom(i) = 1.0 / std::sqrt(std::ldexp((1 << a) + 2 * j + 1, -(a + 2 - h)));
    }
  }
  ctx.set(rom_, rom.cast<std::complex<double>>());
  const auto n = static_cast<int>(inputs.size());
  Eigen::VectorXd mant(n), limit(n), square(n);
  for (int i = 0; i < n; ++i) {
    int e = 0;
    double m = std::frexp(std::abs(inputs(i)), &e);  // |x| = m 2^e, m in [1/2, 1)
    if (!is_reciprocal(function_) && e % 2 != 0) m /= 2;
    mant(i) = m;
    limit(i) = is_reciprocal(function_) ? 1.0 / m : 1.0 / std::sqrt(m);
    square(i) = 1.0 / m;
  }
  ctx.set(mant_, mant.cast<std::complex<double>>());
  if (steps == 0) return;
  const auto side_by_side = [&](const Eigen::VectorXd& v) {
    return Eigen::MatrixXcd(v.replicate(1, steps).cast<std::complex<double>>());
  };
  ctx.set(prod_, Eigen::MatrixXcd::Ones(n, steps));
  ctx.set(iter_, side_by_side(limit));
  if (!is_reciprocal(function_)) ctx.set(square_, side_by_side(square));
}

double divide_root_unit::multiplier_cost(const datapath_config& c, node_id input) const {
  if (!choice_.newton) {
    // A digit-recurrence array: one input-wide add/subtract row per output bit (a second such
    // array for the root before the division).
    const double rows = word_bits_of(c, output_) * word_bits_of(c, input);
    return is_reciprocal(function_) ? rows : 2 * rows;
  }
  if (choice_.steps == 0) return 0;
  const double mant = word_bits_of(c, mant_), rom = word_bits_of(c, rom_), prod = word_bits_of(c, prod_),
               iter = word_bits_of(c, iter_);
  double cost = 0;
  for (int k = 0; k < choice_.steps; ++k) {
    const double x = k == 0 ? rom : iter;
    if (is_reciprocal(function_)) {
      cost += mant * x + x * prod;
    } else {
      const double sq = word_bits_of(c, square_);
      cost += x * x + mant * sq + x * prod;
    }
  }
  return cost;
}

}  // namespace fxmimo::datapath::detail
