#include "fxmimo/harness/datapath.hpp"

#include "fxmimo/fixedpoint/accumulator.hpp"
#include "fxmimo/fixedpoint/conversions.hpp"
#include "fxmimo/fixedpoint/divide.hpp"
#include "fxmimo/fixedpoint/dot_kernel.hpp"
#include "fxmimo/fixedpoint/width.hpp"
#include "fxmimo/golden/precoder.hpp"

#include <cmath>

namespace fxmimo::harness {

namespace fp = fxmimo::fixedpoint;
using word = std::int64_t;
using cw = fp::cword<word>;

namespace {

/// One node while a trial runs: its target, its counters and its words.
struct node_state {
  fp::target spec;
  fp::counters* counters;
  word_matrix* words;
  [[nodiscard]] int frac() const { return spec.fmt.frac_bits; }
  [[nodiscard]] int bits() const { return spec.fmt.container_bits(); }
};

cw get(const word_matrix& w, int row, int col) {
  const std::size_t i = w.at(row, col);
  return {w.re[i], w.is_complex ? w.im[i] : 0};
}

void put(word_matrix& w, int row, int col, const cw& v) {
  const std::size_t i = w.at(row, col);
  w.re[i] = v.re;
  if (w.is_complex) w.im[i] = v.im;
}

/// The words as complex pairs, row-major (the layout the dot kernel reads).
std::vector<cw> interleaved(const word_matrix& w) {
  std::vector<cw> out(w.size());
  for (std::size_t i = 0; i < w.size(); ++i) out[i] = {w.re[i], w.is_complex ? w.im[i] : 0};
  return out;
}

/// Calls f with the integer type that holds `bits` bits (chosen once per node stage).
template <class F>
void with_width(int bits, F&& f) {
  fp::with_int_type(fp::select_width(bits), std::forward<F>(f));
}

/// A golden double matrix brought into a node: each value converted exactly, then requantised
/// once by the node's mode (the ADC, the ROMs, the symbols, the perfect-CSI estimate).
void quantize_values(const Eigen::MatrixXcd& values, bool is_complex, node_state& node) {
  *node.words = word_matrix(static_cast<int>(values.rows()), static_cast<int>(values.cols()), is_complex);
  const fp::requantizer<word> q(node.spec);
  for (int r = 0; r < values.rows(); ++r) {
    for (int c = 0; c < values.cols(); ++c) {
      const std::complex<double> v = values(r, c);
      cw out{fp::from_double(v.real(), q, *node.counters), 0};
      if (is_complex) out.im = fp::from_double(v.imag(), q, *node.counters);
      put(*node.words, r, c, out);
    }
  }
}

template <class P>
fp::cword<P> widen(const cw& v) {
  return {fp::convert_int<P>(v.re), fp::convert_int<P>(v.im)};
}

template <class P>
cw narrow(const fp::cword<P>& v) {
  return {fp::convert_int<word>(v.re), fp::convert_int<word>(v.im)};
}

template <class P>
fp::cword<P> negate(const fp::cword<P>& v) {
  return {P(-v.re), P(-v.im)};
}

/// A complex value times a real word, exactly.
template <class P>
fp::cword<P> scale(const cw& v, word s) {
  const P sp = fp::convert_int<P>(s);
  return {P(fp::convert_int<P>(v.re) * sp), P(fp::convert_int<P>(v.im) * sp)};
}

/// pilot_acc[m,k] = sum over t (index order) of Q(adc[m,t] conj(pilot[t,k])).
void correlate(const node_state& adc, const node_state& pilot, node_state& acc_node) {
  const word_matrix& y = *adc.words;
  const word_matrix& phi = *pilot.words;
  const int num_ant = y.rows, num_pilot = y.cols, num_users = phi.cols;
  *acc_node.words = word_matrix(num_ant, num_users, true);
  const fp::requantizer<word> q(acc_node.spec);
  const std::vector<cw> ys = interleaved(y), phis = interleaved(phi);
  for (int i_ant = 0; i_ant < num_ant; ++i_ant) {
    for (int i_user = 0; i_user < num_users; ++i_user) {
      put(*acc_node.words, i_ant, i_user,
          fp::dot_accumulate<fp::product_form::conj_second>(
              &ys[y.at(i_ant, 0)], 1, &phis[phi.at(0, i_user)], static_cast<std::size_t>(num_users),
              static_cast<std::size_t>(num_pilot), adc.bits(), pilot.bits(), adc.frac() + pilot.frac(), q,
              *acc_node.counters));
    }
  }
}

/// chan_est[m,k] = Q(pilot_acc[m,k] * est_scale[k]).
template <class P>
void estimate(const node_state& pacc, const node_state& scale_node, node_state& est) {
  const word_matrix& a = *pacc.words;
  *est.words = word_matrix(a.rows, a.cols, true);
  const fp::requantizer<P> q(est.spec);
  const int product_frac = pacc.frac() + scale_node.frac();
  for (int i_ant = 0; i_ant < a.rows; ++i_ant) {
    for (int i_user = 0; i_user < a.cols; ++i_user) {
      const fp::cword<P> p = scale<P>(get(a, i_ant, i_user), scale_node.words->re[static_cast<std::size_t>(i_user)]);
      put(*est.words, i_ant, i_user, narrow(fp::requantize(p, product_frac, q, *est.counters)));
    }
  }
}

/// gram[i,j] (j <= i) = sum over antennas (index order) of Q(conj(H[m,i]) H[m,j]); the diagonal
/// gets the RZF loading Q(gram + reg); the upper triangle mirrors: G[j,i] = conj(G[i,j]).
template <class P>
void gram_stage(const node_state& est, node_state& g, bool loaded, double regularizer) {
  const word_matrix& h = *est.words;
  const int num_ant = h.rows, num_users = h.cols;
  *g.words = word_matrix(num_users, num_users, true);
  const fp::requantizer<P> q(g.spec);
  const fp::requantizer<word> q_acc(g.spec);
  const std::vector<cw> hs = interleaved(h);
  const auto stride = static_cast<std::size_t>(num_users);
  for (int i_user = 0; i_user < num_users; ++i_user) {
    for (int j_user = 0; j_user <= i_user; ++j_user) {
      put(*g.words, i_user, j_user,
          fp::dot_accumulate<fp::product_form::conj_second>(&hs[h.at(0, j_user)], stride, &hs[h.at(0, i_user)], stride,
                                                            static_cast<std::size_t>(num_ant), est.bits(), est.bits(),
                                                            2 * est.frac(), q_acc, *g.counters));
    }
  }
  const fp::requantizer<word> qw(g.spec);
  if (loaded) {
    const word reg = fp::from_double(regularizer, qw, *g.counters);
    for (int i_user = 0; i_user < num_users; ++i_user) {
      cw d = get(*g.words, i_user, i_user);
      d.re = fp::convert_int<word>(q.overflow(P(fp::convert_int<P>(d.re) + reg), *g.counters));
      put(*g.words, i_user, i_user, d);
    }
  }
  for (int i_user = 0; i_user < num_users; ++i_user) {
    for (int j_user = 0; j_user < i_user; ++j_user) {
      const cw v = get(*g.words, i_user, j_user);
      put(*g.words, j_user, i_user, {v.re, fp::convert_int<word>(q.overflow(P(-fp::convert_int<P>(v.im)), *g.counters))});
    }
  }
}

/// LDL^H of G, column by column (Golub & Van Loan Alg. 4.1.2, complex form):
///   d_j = Q(... Q(Q(G_jj) - Q(|l_j0|^2 d_0)) ... - Q(|l_j,j-1|^2 d_{j-1}))    [ldl_acc]
///   r_j = Q(1 / d_j)                                                       [inv_diag_recip]
///   n_ij = Q(... Q(Q(G_ij) - Q(l_i0 conj(l_j0) d_0)) ...), i > j              [ldl_acc]
///   l_ij = Q(n_ij r_j)                                                     [inv_factor]
template <class P>
void ldl_stage(const node_state& g, node_state& acc_node, node_state& recip, node_state& factor) {
  const word_matrix& gm = *g.words;
  const int num_users = gm.rows;
  *acc_node.words = word_matrix(num_users, num_users, true);
  *recip.words = word_matrix(num_users, 1, false);
  *factor.words = word_matrix(num_users, num_users, true);
  word_matrix& l = *factor.words;
  const fp::requantizer<P> q_acc(acc_node.spec);
  const fp::requantizer<P> q_factor(factor.spec);
  const int term_frac = 2 * factor.frac() + acc_node.frac();
  fp::complex_accumulator<P> acc(q_acc);
  std::vector<word> d(static_cast<std::size_t>(num_users));
  for (int j = 0; j < num_users; ++j) {
    acc.reset();
    acc.add(widen<P>(get(gm, j, j)), g.frac(), *acc_node.counters);
    for (int k = 0; k < j; ++k) {
      const cw ljk = get(l, j, k);
      const P mag2 = P(fp::convert_int<P>(ljk.re) * ljk.re + fp::convert_int<P>(ljk.im) * ljk.im);
      acc.add(fp::cword<P>{P(-(mag2 * fp::convert_int<P>(d[static_cast<std::size_t>(k)]))), P(0)}, term_frac,
              *acc_node.counters);
    }
    d[static_cast<std::size_t>(j)] = fp::convert_int<word>(acc.value().re);
    put(*acc_node.words, j, j, {d[static_cast<std::size_t>(j)], 0});
    const word r = fp::divide<word>(1, 0, d[static_cast<std::size_t>(j)], acc_node.frac(), recip.spec, *recip.counters);
    recip.words->re[static_cast<std::size_t>(j)] = r;
    for (int i = j + 1; i < num_users; ++i) {
      acc.reset();
      acc.add(widen<P>(get(gm, i, j)), g.frac(), *acc_node.counters);
      for (int k = 0; k < j; ++k) {
        const fp::cword<P> lik_conj_ljk = fp::cmul_conj<P>(widen<P>(get(l, i, k)), widen<P>(get(l, j, k)));
        const P dk = fp::convert_int<P>(d[static_cast<std::size_t>(k)]);
        acc.add(fp::cword<P>{P(-(lik_conj_ljk.re * dk)), P(-(lik_conj_ljk.im * dk))}, term_frac, *acc_node.counters);
      }
      const cw n_ij = narrow(acc.value());
      put(*acc_node.words, i, j, n_ij);
      put(l, i, j, narrow(fp::requantize(scale<P>(n_ij, r), acc_node.frac() + recip.frac(), q_factor, *factor.counters)));
    }
  }
}

/// G^-1 from the factors, column c of the identity at a time:
///   forward  y_c = Q(1); y_i = Q(... Q(0 - Q(l_ic y_c)) ... - Q(l_i,i-1 y_{i-1})), i > c   [inv_fwd]
///   backward x_i = Q(... Q(Q(y_i r_i) - Q(conj(l_{i+1,i}) x_{i+1})) ... ), i = K-1 .. 0, k rising  [inv_out]
template <class P>
void ldl_solve_stage(const node_state& factor, const node_state& recip, node_state& fwd, node_state& out) {
  const word_matrix& l = *factor.words;
  const int num_users = l.rows;
  *fwd.words = word_matrix(num_users, num_users, true);
  *out.words = word_matrix(num_users, num_users, true);
  const fp::requantizer<P> q_fwd(fwd.spec);
  const fp::requantizer<P> q_out(out.spec);
  fp::complex_accumulator<P> acc_fwd(q_fwd);
  fp::complex_accumulator<P> acc_out(q_out);
  for (int c = 0; c < num_users; ++c) {
    acc_fwd.reset();
    acc_fwd.add(fp::cword<P>{P(1), P(0)}, 0, *fwd.counters);
    put(*fwd.words, c, c, narrow(acc_fwd.value()));
    for (int i = c + 1; i < num_users; ++i) {
      acc_fwd.reset();
      for (int k = c; k < i; ++k) {
        acc_fwd.add(negate(fp::cmul<P>(widen<P>(get(l, i, k)), widen<P>(get(*fwd.words, k, c)))),
                    factor.frac() + fwd.frac(), *fwd.counters);
      }
      put(*fwd.words, i, c, narrow(acc_fwd.value()));
    }
    for (int i = num_users - 1; i >= 0; --i) {
      acc_out.reset();
      acc_out.add(scale<P>(get(*fwd.words, i, c), recip.words->re[static_cast<std::size_t>(i)]),
                  fwd.frac() + recip.frac(), *out.counters);
      for (int k = i + 1; k < num_users; ++k) {
        acc_out.add(negate(fp::cmul_conj<P>(widen<P>(get(*out.words, k, c)), widen<P>(get(l, k, i)))),
                    out.frac() + factor.frac(), *out.counters);
      }
      put(*out.words, i, c, narrow(acc_out.value()));
    }
  }
}

/// Neumann series with D = diag(G):
///   r_i = Q(1 / G_ii)                      [inv_diag_recip]
///   B_ij = Q(delta_ij - r_i G_ij)          [inv_iter]
///   T_1 = B diag(r), T_n = B T_{n-1}: T_n[i,c] = sum over j (index order) of Q(B_ij T_{n-1}[j,c])  [inv_term]
///   X[i,c] = Q(... Q(Q(diag(r)[i,c]) + Q(T_1[i,c])) ... + Q(T_{T-1}[i,c]))   [inv_out]
template <class P>
void neumann_stage(const node_state& g, int num_terms, node_state& recip, node_state& iter, node_state& term_node,
                   node_state& out) {
  const word_matrix& gm = *g.words;
  const int num_users = gm.rows;
  *recip.words = word_matrix(num_users, 1, false);
  *iter.words = word_matrix(num_users, num_users, true);
  *out.words = word_matrix(num_users, num_users, true);
  for (int i = 0; i < num_users; ++i) {
    recip.words->re[static_cast<std::size_t>(i)] =
        fp::divide<word>(1, 0, get(gm, i, i).re, g.frac(), recip.spec, *recip.counters);
  }
  const fp::requantizer<P> q_iter(iter.spec);
  const int rg_frac = recip.frac() + g.frac();
  for (int i = 0; i < num_users; ++i) {
    const word ri = recip.words->re[static_cast<std::size_t>(i)];
    for (int j = 0; j < num_users; ++j) {
      fp::cword<P> v = negate(scale<P>(get(gm, i, j), ri));
      if (i == j) v.re = P(v.re + fp::pow2<P>(rg_frac));
      put(*iter.words, i, j, narrow(fp::requantize(v, rg_frac, q_iter, *iter.counters)));
    }
  }
  // Terms: term 0 is diag(r) at the reciprocal's fraction bits.
  const int num_extra = num_terms - 1;
  if (num_extra > 0) *term_node.words = word_matrix(num_users, num_users * num_extra, true);
  const fp::requantizer<P> q_term(term_node.spec);
  fp::complex_accumulator<P> acc_term(q_term);
  for (int n = 1; n <= num_extra; ++n) {
    for (int i = 0; i < num_users; ++i) {
      for (int c = 0; c < num_users; ++c) {
        acc_term.reset();
        for (int j = 0; j < num_users; ++j) {
          if (n == 1) {
            if (j != c) continue;  // diag(r): only j = c is non-zero
            acc_term.add(scale<P>(get(*iter.words, i, j), recip.words->re[static_cast<std::size_t>(c)]),
                         iter.frac() + recip.frac(), *term_node.counters);
          } else {
            acc_term.add(fp::cmul<P>(widen<P>(get(*iter.words, i, j)),
                                     widen<P>(get(*term_node.words, j, (n - 2) * num_users + c))),
                         iter.frac() + term_node.frac(), *term_node.counters);
          }
        }
        put(*term_node.words, i, (n - 1) * num_users + c, narrow(acc_term.value()));
      }
    }
  }
  const fp::requantizer<P> q_out(out.spec);
  fp::complex_accumulator<P> acc_out(q_out);
  for (int i = 0; i < num_users; ++i) {
    for (int c = 0; c < num_users; ++c) {
      acc_out.reset();
      if (i == c) acc_out.add({fp::convert_int<P>(recip.words->re[static_cast<std::size_t>(i)]), P(0)}, recip.frac(), *out.counters);
      for (int n = 1; n <= num_extra; ++n) {
        acc_out.add(widen<P>(get(*term_node.words, i, (n - 1) * num_users + c)), term_node.frac(), *out.counters);
      }
      put(*out.words, i, c, narrow(acc_out.value()));
    }
  }
}

/// precoder: MF W[m,k] = Q(conj(H[m,k])); ZF/RZF W[m,k] = sum over j (index order) of
/// Q(conj(H[m,j] A[j,k])), which is conj(H A).
template <class P>
void precoder_stage(const node_state& est, const node_state* inverse, node_state& pre) {
  const word_matrix& h = *est.words;
  *pre.words = word_matrix(h.rows, h.cols, true);
  const fp::requantizer<P> q(pre.spec);
  if (inverse == nullptr) {
    for (int i_ant = 0; i_ant < h.rows; ++i_ant) {
      for (int i_user = 0; i_user < h.cols; ++i_user) {
        const cw v = get(h, i_ant, i_user);
        const fp::cword<P> conj_v{fp::convert_int<P>(v.re), P(-fp::convert_int<P>(v.im))};
        put(*pre.words, i_ant, i_user, narrow(fp::requantize(conj_v, est.frac(), q, *pre.counters)));
      }
    }
    return;
  }
  const word_matrix& a = *inverse->words;
  const fp::requantizer<word> q_acc(pre.spec);
  const std::vector<cw> hs = interleaved(h), as = interleaved(a);
  for (int i_ant = 0; i_ant < h.rows; ++i_ant) {
    for (int i_user = 0; i_user < h.cols; ++i_user) {
      put(*pre.words, i_ant, i_user,
          fp::dot_accumulate<fp::product_form::conj_both>(&hs[h.at(i_ant, 0)], 1, &as[a.at(0, i_user)],
                                                          static_cast<std::size_t>(a.cols),
                                                          static_cast<std::size_t>(h.cols), est.bits(),
                                                          inverse->bits(), est.frac() + inverse->frac(), q_acc,
                                                          *pre.counters));
    }
  }
}

/// power_acc = sum (rows m, then users k, index order) of Q(|W[m,k]|^2): one sum (total) or one
/// per antenna; norm = Q(1 / sqrt(power_acc)).
template <class P>
void power_stage(const node_state& pre, bool per_antenna, node_state& power, node_state& norm) {
  const word_matrix& w = *pre.words;
  const int num_sums = per_antenna ? w.rows : 1;
  *power.words = word_matrix(num_sums, 1, false);
  *norm.words = word_matrix(num_sums, 1, false);
  const fp::requantizer<P> q(power.spec);
  fp::accumulator<P> acc(q);
  for (int i_ant = 0; i_ant < w.rows; ++i_ant) {
    if (per_antenna || i_ant == 0) acc.reset();
    for (int i_user = 0; i_user < w.cols; ++i_user) {
      const cw v = get(w, i_ant, i_user);
      acc.add(P(fp::convert_int<P>(v.re) * v.re + fp::convert_int<P>(v.im) * v.im), 2 * pre.frac(), *power.counters);
    }
    if (per_antenna) power.words->re[static_cast<std::size_t>(i_ant)] = fp::convert_int<word>(acc.value());
  }
  if (!per_antenna) power.words->re[0] = fp::convert_int<word>(acc.value());
  for (int i = 0; i < num_sums; ++i) {
    norm.words->re[static_cast<std::size_t>(i)] =
        fp::rsqrt<word>(power.words->re[static_cast<std::size_t>(i)], power.frac(), norm.spec, *norm.counters);
  }
}

/// weights[m,k] = Q(W[m,k] norm tx_gain), the triple product exact.
template <class P>
void weights_stage(const node_state& pre, const node_state& norm, const node_state& gain, node_state& wts) {
  const word_matrix& w = *pre.words;
  *wts.words = word_matrix(w.rows, w.cols, true);
  const fp::requantizer<P> q(wts.spec);
  const int product_frac = pre.frac() + norm.frac() + gain.frac();
  const P g = fp::convert_int<P>(gain.words->re[0]);
  for (int i_ant = 0; i_ant < w.rows; ++i_ant) {
    const std::size_t i_norm = norm.words->size() == 1 ? 0 : static_cast<std::size_t>(i_ant);
    const P ng = P(fp::convert_int<P>(norm.words->re[i_norm]) * g);
    for (int i_user = 0; i_user < w.cols; ++i_user) {
      const cw v = get(w, i_ant, i_user);
      const fp::cword<P> p{P(fp::convert_int<P>(v.re) * ng), P(fp::convert_int<P>(v.im) * ng)};
      put(*wts.words, i_ant, i_user, narrow(fp::requantize(p, product_frac, q, *wts.counters)));
    }
  }
}

/// tx_acc[m,n] = sum over users k (index order) of Q(weights[m,k] symbols[k,n]); dac = Q(tx_acc).
void transmit_stage(const node_state& wts, const node_state& sym, node_state& tx, node_state& dac) {
  const word_matrix& w = *wts.words;
  const word_matrix& s = *sym.words;
  const int num_ant = w.rows, num_users = w.cols, num_sym = s.cols;
  *tx.words = word_matrix(num_ant, num_sym, true);
  *dac.words = word_matrix(num_ant, num_sym, true);
  const fp::requantizer<word> q_tx(tx.spec);
  const fp::requantizer<word> q_dac(dac.spec);
  const std::vector<cw> ws = interleaved(w), ss = interleaved(s);
  for (int i_ant = 0; i_ant < num_ant; ++i_ant) {
    for (int i_sym = 0; i_sym < num_sym; ++i_sym) {
      const cw v = fp::dot_accumulate<fp::product_form::plain>(
          &ws[w.at(i_ant, 0)], 1, &ss[s.at(0, i_sym)], static_cast<std::size_t>(num_sym),
          static_cast<std::size_t>(num_users), wts.bits(), sym.bits(), wts.frac() + sym.frac(), q_tx, *tx.counters);
      put(*tx.words, i_ant, i_sym, v);
      put(*dac.words, i_ant, i_sym, fp::requantize(v, tx.frac(), q_dac, *dac.counters));
    }
  }
}

/// Bits an integer type needs for an exact complex product of words of a and b bits summed
/// twice (re = ac - bd), and for an accumulator of `acc_bits` with its headroom bit.
int product_bits(std::initializer_list<int> operand_bits, int acc_bits) {
  int sum = 1;
  for (int b : operand_bits) sum += b;
  return std::max(sum, acc_bits + 1);
}

}  // namespace

fixed_trial run_fixed_datapath(const golden::scenario& scen, const datapath_config& config,
                               const golden::trial_data& trial) {
  fixed_trial out;
  auto node = [&](node_id id) {
    return node_state{config[id].spec, &out.counters[index_of(id)], &out.words[index_of(id)]};
  };
  node_state adc = node(node_id::adc), pilot = node(node_id::pilot_rom), pacc = node(node_id::pilot_acc);
  node_state es = node(node_id::est_scale), est = node(node_id::chan_est);

  quantize_values(trial.adc, true, adc);
  quantize_values(trial.pilots, true, pilot);
  correlate(adc, pilot, pacc);
  quantize_values(trial.est_scale.cast<std::complex<double>>(), false, es);
  if (scen.estimator.kind == golden::estimator_kind::perfect) {
    quantize_values(trial.chan_est, true, est);
  } else {
    with_width(product_bits({pacc.bits(), es.bits()}, est.bits()),
               [&](auto tag) { estimate<decltype(tag)>(pacc, es, est); });
  }

  node_state inv_out = node(node_id::inv_out);
  const bool uses_inverse = scen.precoder.kind != golden::precoder_kind::mf;
  if (uses_inverse) {
    node_state g = node(node_id::gram);
    const bool loaded = scen.precoder.kind == golden::precoder_kind::rzf;
    with_width(product_bits({est.bits(), est.bits()}, g.bits()),
               [&](auto tag) { gram_stage<decltype(tag)>(est, g, loaded, loaded ? scen.rzf_regularizer() : 0.0); });
    node_state recip = node(node_id::inv_diag_recip);
    if (scen.precoder.inversion == golden::inversion_kind::neumann) {
      node_state iter = node(node_id::inv_iter), term = node(node_id::inv_term);
      const int bits = std::max({product_bits({recip.bits(), g.bits()}, iter.bits()),
                                 product_bits({iter.bits(), std::max(term.bits(), recip.bits())}, term.bits()),
                                 std::max({inv_out.bits(), term.bits(), recip.bits()}) + 2,
                                 recip.frac() + g.frac() + 2});  // the exact 1 of I at r*G's fraction bits
      with_width(bits, [&](auto tag) {
        neumann_stage<decltype(tag)>(g, scen.precoder.neumann_terms, recip, iter, term, inv_out);
      });
    } else {
      // LDL^H (the reference inversion of the golden model is also realised by LDL^H here).
      node_state lacc = node(node_id::ldl_acc), factor = node(node_id::inv_factor), fwd = node(node_id::inv_fwd);
      const int bits = std::max({product_bits({factor.bits(), factor.bits(), lacc.bits()}, lacc.bits()),
                                 product_bits({lacc.bits(), recip.bits()}, factor.bits()), g.bits() + 2});
      with_width(bits, [&](auto tag) { ldl_stage<decltype(tag)>(g, lacc, recip, factor); });
      const int solve_bits = std::max({product_bits({factor.bits(), fwd.bits()}, fwd.bits()),
                                       product_bits({fwd.bits(), recip.bits()}, inv_out.bits()),
                                       product_bits({inv_out.bits(), factor.bits()}, inv_out.bits())});
      with_width(solve_bits, [&](auto tag) { ldl_solve_stage<decltype(tag)>(factor, recip, fwd, inv_out); });
    }
  }

  node_state pre = node(node_id::precoder);
  with_width(uses_inverse ? product_bits({est.bits(), inv_out.bits()}, pre.bits()) : std::max(est.bits(), pre.bits()) + 2,
             [&](auto tag) { precoder_stage<decltype(tag)>(est, uses_inverse ? &inv_out : nullptr, pre); });

  node_state power = node(node_id::power_acc), nrm = node(node_id::norm), gain = node(node_id::tx_gain);
  const bool per_antenna = scen.precoder.normalization == golden::power_normalization::per_antenna;
  with_width(product_bits({pre.bits(), pre.bits()}, power.bits()) + 1,
             [&](auto tag) { power_stage<decltype(tag)>(pre, per_antenna, power, nrm); });
  const double p_dig = golden::digital_power(scen);
  const double gain_value = std::sqrt(per_antenna ? p_dig / scen.array.num_antennas : p_dig);
  quantize_values(Eigen::MatrixXcd::Constant(1, 1, gain_value), false, gain);
  node_state wts = node(node_id::weights);
  with_width(product_bits({pre.bits(), nrm.bits(), gain.bits()}, wts.bits()),
             [&](auto tag) { weights_stage<decltype(tag)>(pre, nrm, gain, wts); });

  node_state sym = node(node_id::symbols), tx = node(node_id::tx_acc), dac = node(node_id::dac);
  quantize_values(trial.symbols, true, sym);
  transmit_stage(wts, sym, tx, dac);
  out.dac_value = to_values(*dac.words, dac.frac());
  return out;
}

Eigen::MatrixXcd to_values(const word_matrix& words, int frac_bits) {
  // Scaling by a power of two is exact in double (no word here comes near its range limits);
  // the conversion of a word above 2^53 rounds, which only reporting sees.
  const double lsb = std::ldexp(1.0, -frac_bits);
  Eigen::MatrixXcd out(words.rows, words.cols);
  for (int r = 0; r < words.rows; ++r) {
    for (int c = 0; c < words.cols; ++c) {
      const std::size_t i = words.at(r, c);
      out(r, c) = {static_cast<double>(words.re[i]) * lsb,
                   words.is_complex ? static_cast<double>(words.im[i]) * lsb : 0.0};
    }
  }
  return out;
}

}  // namespace fxmimo::harness
