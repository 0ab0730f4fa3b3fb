#include "optics/gas_absorption.hpp"

#include <algorithm>
#include <numeric>
#include <stdexcept>

namespace solstrata::optics {
namespace {

/// Terms of one bin: weight and optical depth per layer, [term * nl + layer].
struct Terms {
  std::vector<double> w;
  std::vector<double> tau;
  [[nodiscard]] std::size_t size() const { return w.size(); }
  [[nodiscard]] double column(std::size_t i, std::size_t nl) const {
    double s = 0.0;
    for (std::size_t l = 0; l < nl; ++l) s += tau[i * nl + l];
    return s;
  }
};

/// The terms of one gas in grid bin [lo, hi); empty when the gas does not absorb there.
Terms gas_terms(const GasColumn& gas, const std::vector<NodeWeights>& nodes, double lo, double hi, std::size_t nl) {
  Terms t;
  double covered = 0.0;
  const KTable& table = *gas.table;
  for (const KTableBin& b : table.bins) {
    const double ov = std::min(hi, b.upper_nm) - std::max(lo, b.lower_nm);
    if (ov <= 0.0) continue;
    const double f = ov / (hi - lo);
    covered += f;
    for (std::size_t i = 0; i < b.weights.size(); ++i) {
      t.w.push_back(f * b.weights[i]);
      for (std::size_t l = 0; l < nl; ++l) t.tau.push_back(interpolate_k(table, b.k[i], nodes[l]) * gas.molecules[l]);
    }
  }
  if (t.w.empty()) return t;
  if (covered < 1.0 - 1e-12) {
    t.w.push_back(1.0 - covered);
    t.tau.insert(t.tau.end(), nl, 0.0);
  }
  // A gas too weak in this bin to matter is one grey term.
  double strongest = 0.0;
  for (std::size_t i = 0; i < t.size(); ++i) strongest = std::max(strongest, t.column(i, nl));
  if (strongest == 0.0) return {};
  if (strongest < kGreyGasTau && t.size() > 1) {
    Terms g;
    g.w = {std::accumulate(t.w.begin(), t.w.end(), 0.0)};
    g.tau.assign(nl, 0.0);
    for (std::size_t i = 0; i < t.size(); ++i)
      for (std::size_t l = 0; l < nl; ++l) g.tau[l] += t.w[i] * t.tau[i * nl + l];
    for (double& v : g.tau) v /= g.w[0];
    return g;
  }
  return t;
}

/// Random overlap of two term sets, re-sorted and re-binned (see gas_points).
Terms overlap(const Terms& a, const Terms& b, std::size_t nl) {
  Terms prod;
  for (std::size_t i = 0; i < a.size(); ++i)
    for (std::size_t j = 0; j < b.size(); ++j) {
      prod.w.push_back(a.w[i] * b.w[j]);
      for (std::size_t l = 0; l < nl; ++l) prod.tau.push_back(a.tau[i * nl + l] + b.tau[j * nl + l]);
    }
  if (a.size() == 1 || b.size() == 1) return prod;
  // Re-sort by column optical depth, re-bin at the cumulative weights of the larger term set.
  const Terms& ref = a.size() >= b.size() ? a : b;
  std::vector<std::size_t> order(prod.size());
  std::iota(order.begin(), order.end(), 0);
  std::vector<double> col(prod.size());
  for (std::size_t i = 0; i < prod.size(); ++i) col[i] = prod.column(i, nl);
  std::stable_sort(order.begin(), order.end(), [&](std::size_t x, std::size_t y) { return col[x] < col[y]; });
  std::vector<std::size_t> ref_order(ref.size());
  std::iota(ref_order.begin(), ref_order.end(), 0);
  std::stable_sort(ref_order.begin(), ref_order.end(),
                   [&](std::size_t x, std::size_t y) { return ref.column(x, nl) < ref.column(y, nl); });
  std::vector<double> edges;  // cumulative weight at the upper edge of each new point
  double c = 0.0;
  for (std::size_t i : ref_order) edges.push_back(c += ref.w[i]);
  edges.back() = 2.0;  // everything left goes into the last point
  Terms out;
  out.w.assign(edges.size(), 0.0);
  out.tau.assign(edges.size() * nl, 0.0);
  double cum = 0.0;
  std::size_t g = 0;
  for (std::size_t i : order) {
    // A product term belongs to the new point that holds its weight's midpoint.
    const double mid = cum + 0.5 * prod.w[i];
    cum += prod.w[i];
    while (g + 1 < edges.size() && mid > edges[g]) ++g;
    out.w[g] += prod.w[i];
    for (std::size_t l = 0; l < nl; ++l) out.tau[g * nl + l] += prod.w[i] * prod.tau[i * nl + l];
  }
  Terms kept;
  for (std::size_t k = 0; k < out.size(); ++k) {
    if (out.w[k] <= 0.0) continue;
    kept.w.push_back(out.w[k]);
    for (std::size_t l = 0; l < nl; ++l) kept.tau.push_back(out.tau[k * nl + l] / out.w[k]);
  }
  return kept;
}

}  // namespace

GasPoints gas_points(const spectrum::Grid& grid, const LayerState& state, const std::vector<GasColumn>& gases) {
  const std::size_t nl = state.pressure_hpa.size();
  if (state.temperature_k.size() != nl || (!state.h2o_vmr.empty() && state.h2o_vmr.size() != nl))
    throw std::invalid_argument("gas_points: layer state arrays differ in length");
  std::vector<std::vector<NodeWeights>> nodes;
  for (const GasColumn& g : gases) {
    if (!g.table) throw std::invalid_argument("gas_points: a gas has no table");
    if (g.molecules.size() != nl) throw std::invalid_argument("gas_points: the " + g.table->gas + " column has the wrong number of layers");
    std::vector<NodeWeights> nw;
    for (std::size_t l = 0; l < nl; ++l)
      nw.push_back(node_weights(*g.table, state.pressure_hpa[l], state.temperature_k[l],
                                state.h2o_vmr.empty() ? 0.0 : state.h2o_vmr[l]));
    nodes.push_back(std::move(nw));
  }
  std::vector<Terms> per_bin;
  per_bin.reserve(grid.size());
  std::size_t total = 0;
  for (const spectrum::Bin& bin : grid.bins()) {
    Terms acc;
    acc.w = {1.0};
    acc.tau.assign(nl, 0.0);
    for (std::size_t k = 0; k < gases.size(); ++k) {
      const Terms t = gas_terms(gases[k], nodes[k], bin.lower_nm, bin.upper_nm, nl);
      if (!t.w.empty()) acc = overlap(acc, t, nl);
    }
    total += acc.size();
    per_bin.push_back(std::move(acc));
  }
  GasPoints out;
  out.n_layers = nl;
  out.tau.assign(nl * total, 0.0);
  std::size_t q = 0;
  for (std::size_t b = 0; b < per_bin.size(); ++b) {
    const Terms& t = per_bin[b];
    for (std::size_t i = 0; i < t.size(); ++i, ++q) {
      out.points.push_back({b, t.w[i]});
      for (std::size_t l = 0; l < nl; ++l) out.tau[l * total + q] = t.tau[i * nl + l];
    }
  }
  return out;
}

}  // namespace solstrata::optics
