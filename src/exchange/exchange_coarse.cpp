// The two-level preconditioner of the exchange solver's large path (see exchange_coarse.hpp).
#include "exchange/exchange_coarse.hpp"

#include <tbb/blocked_range.h>
#include <tbb/parallel_for.h>

#include <algorithm>
#include <cmath>
#include <numeric>
#include <stdexcept>
#include <tuple>

namespace hearthray {
namespace exchange_detail {
namespace {

constexpr std::uint32_t kNone = ~std::uint32_t{0};
// The coarse matrix is not used when its LU's reciprocal condition estimate is below this.
constexpr double kSmallestRcond = 1e-13;
// m^3 at most this many times the non-zeros of F (see the constructor).
constexpr double kFlopsPerNonZero = 16;
// S_c is factored again when some a_k moved by more than this share of itself. On the
// 98,592-patch furnace (walls losing 1.2-1.5 W/m2K) a_k moves by ~1e-5 of itself between
// Newton steps (the wall loss's share of a_k is ~0.2 %), so the first LU serves all steps:
// measured 4 -> 1 LU (0.05-0.08 s each) and the same 33 GMRES iterations.
constexpr double kRefactor = 1e-3;

// Classes of faces an aggregate never mixes, tried from the finest to the coarsest: the first
// with at most `most` classes is taken. Level 0: node (where nodes hold several faces), kind
// of node (fixed or not) and emissivity; 1: node and kind; 2: kind; 3: one class.
std::vector<std::uint32_t> face_classes(const Setup& s, std::size_t most) {
  std::vector<std::uint32_t> faces_on(s.nodes, 0);
  for (std::uint32_t k : s.node_of_face) ++faces_on[k];
  using Key = std::tuple<std::uint32_t, bool, double>;
  std::vector<Key> keys(s.faces);
  for (int level = 0;; ++level) {
    for (std::size_t i = 0; i < s.faces; ++i) {
      const std::uint32_t k = s.node_of_face[i];
      const std::uint32_t node = level <= 1 && faces_on[k] > 1 ? k : kNone;
      keys[i] = Key{node, level <= 2 && s.fixed[k], level == 0 ? s.eps[i] : 0.0};
    }
    std::vector<Key> distinct = keys;
    std::sort(distinct.begin(), distinct.end());
    distinct.erase(std::unique(distinct.begin(), distinct.end()), distinct.end());
    if (distinct.size() > most && level < 3) continue;
    std::vector<std::uint32_t> cls(s.faces);
    for (std::size_t i = 0; i < s.faces; ++i) {
      cls[i] = static_cast<std::uint32_t>(
          std::lower_bound(distinct.begin(), distinct.end(), keys[i]) - distinct.begin());
    }
    return cls;
  }
}

}  // namespace

// Recursive coordinate bisection of faces order_[begin, end) into `pieces` aggregates of
// nearly equal counts: cut across the longest side of their box of centres, at the count
// that gives each side its share of pieces. Ties of the coordinate go by face index, so the
// cut is a function of the data alone.
void CoarseSpace::bisect(std::size_t begin, std::size_t end, std::size_t pieces) {
  if (pieces <= 1 || s_.centres == nullptr) {
    for (std::size_t p = 1; p <= std::max<std::size_t>(pieces, 1); ++p) {
      first_.push_back(std::uint32_t(begin + (end - begin) * p / std::max<std::size_t>(pieces, 1)));
    }
    return;
  }
  const std::vector<Vec3>& c = *s_.centres;
  Vec3 lo = c[order_[begin]], hi = lo;
  for (std::size_t q = begin; q < end; ++q) {
    const Vec3& p = c[order_[q]];
    lo = Vec3{std::min(lo.x, p.x), std::min(lo.y, p.y), std::min(lo.z, p.z)};
    hi = Vec3{std::max(hi.x, p.x), std::max(hi.y, p.y), std::max(hi.z, p.z)};
  }
  const Vec3 side = hi - lo;
  double Vec3::*axis = &Vec3::x;
  if (side.y > side.*axis) axis = &Vec3::y;
  if (side.z > side.*axis) axis = &Vec3::z;
  const std::size_t left = pieces / 2;
  const std::size_t middle = begin + (end - begin) * left / pieces;
  std::nth_element(order_.begin() + std::ptrdiff_t(begin), order_.begin() + std::ptrdiff_t(middle),
                   order_.begin() + std::ptrdiff_t(end), [&](std::uint32_t a, std::uint32_t b) {
                     return c[a].*axis < c[b].*axis || (c[a].*axis == c[b].*axis && a < b);
                   });
  bisect(begin, middle, left);
  bisect(middle, end, pieces - left);
}

CoarseSpace::CoarseSpace(const Setup& s, int target, const PassProducts& products) : s_(s) {
  const std::size_t n = s.faces;
  // At most an eighth of the faces, and few enough that the LU of S_c (2 m^3 / 3 flops, dense
  // and fast) costs about as much as one product with F (memory-bound): measured at 98,592
  // faces, the LU at m = 1017 took 0.05-0.07 s and a product with the 161 M non-zeros of F
  // about 0.17 CPU-s (from half of F). There the rule gives m = 1370 (LU 0.11 s in a
  // micro-benchmark of Eigen's PartialPivLU against 0.05 s at 1024; it is done once a solve,
  // see kRefactor): 22 GMRES iterations rather than 24 at m = 1017.
  const double by_cost = std::cbrt(kFlopsPerNonZero * double(s.F->nonZeros()));
  const std::size_t most =
      std::max<std::size_t>(1, std::min<std::size_t>(n / 8, std::size_t(by_cost)));
  const std::size_t wanted = std::clamp<std::size_t>(std::size_t(std::max(target, 1)), 1, most);
  const std::vector<std::uint32_t> cls = face_classes(s, std::max<std::size_t>(1, wanted / 2));
  // Faces by class, in face order within a class; each class cut into pieces of about
  // n / wanted faces, by their centres when given, else in face order.
  order_.resize(n);
  std::iota(order_.begin(), order_.end(), 0u);
  std::stable_sort(order_.begin(), order_.end(),
                   [&](std::uint32_t a, std::uint32_t b) { return cls[a] < cls[b]; });
  const std::size_t chunk = (n + wanted - 1) / wanted;
  first_.assign(1, 0);
  for (std::size_t begin = 0; begin < n;) {
    std::size_t end = begin;
    while (end < n && cls[order_[end]] == cls[order_[begin]]) ++end;
    bisect(begin, end, (end - begin + chunk - 1) / chunk);
    begin = end;
  }
  const std::size_t m = first_.size() - 1;
  aggregate_.resize(n);
  for (std::size_t I = 0; I < m; ++I) {
    // Each aggregate's faces in face order: its row of F_c is summed in that order.
    std::sort(order_.begin() + first_[I], order_.begin() + first_[I + 1]);
    for (std::size_t q = first_[I]; q < first_[I + 1]; ++q)
      aggregate_[order_[q]] = std::uint32_t(I);
  }
  area_ = Eigen::VectorXd::Zero(Eigen::Index(m));
  reflected_ = Eigen::VectorXd::Zero(Eigen::Index(m));
  for (std::size_t i = 0; i < n; ++i) {
    area_[aggregate_[i]] += s.area[i];
    reflected_[aggregate_[i]] += s.area[i] * (1 - s.eps[i]);
  }
  reflected_.array() /= area_.array();

  // (unknown node, aggregate) pairs with their weights, summed in face order.
  std::vector<std::tuple<std::uint32_t, std::uint32_t, std::uint32_t>> keyed;
  for (std::size_t i = 0; i < n; ++i) {
    const std::uint32_t k = s.node_of_face[i];
    if (!s.fixed[k]) keyed.emplace_back(k, aggregate_[i], std::uint32_t(i));
  }
  std::sort(keyed.begin(), keyed.end());
  for (const auto& [k, I, i] : keyed) {
    if (pairs_.empty() || pairs_.back().node != k || pairs_.back().aggregate != I) {
      pairs_.push_back(Pair{k, I, 0.0});
    }
    pairs_.back().weight += s.area[i] * s.eps[i];
  }
  build_coarse_factors(products);
}

// F_c = R F P: one pass over F, a row of F_c per aggregate summed by one task in face order,
// so any thread count gives the same bits; the same pass makes y_k = F x_k (K of them), each
// row of F summed in column order as multiply() does. Making those products here rather than
// in a pass of their own saved the start's pass over F (0.2-0.3 CPU-s at 98,592 faces).
template <int K>
void CoarseSpace::coarse_pass(const double* const* in, double* const* out) {
  const std::size_t m = size();
  const SparseMatrix& F = *s_.F;
  tbb::parallel_for(tbb::blocked_range<std::size_t>(0, m, 1),
                    [&](const tbb::blocked_range<std::size_t>& range) {
                      std::vector<double> row(m);
                      for (std::size_t I = range.begin(); I != range.end(); ++I) {
                        std::fill(row.begin(), row.end(), 0.0);
                        for (std::uint32_t q = first_[I]; q < first_[I + 1]; ++q) {
                          const std::uint32_t i = order_[q];
                          const double a = s_.area[i];
                          double sum[K > 0 ? K : 1] = {};
                          for (SparseMatrix::InnerIterator it(F, i); it; ++it) {
                            row[aggregate_[it.col()]] += a * it.value();
                            for (int k = 0; k < K; ++k) sum[k] += it.value() * in[k][it.col()];
                          }
                          for (int k = 0; k < K; ++k) out[k][i] = sum[k];
                        }
                        for (std::size_t J = 0; J < m; ++J) {
                          Fc_(Eigen::Index(I), Eigen::Index(J)) = row[J] / area_[Eigen::Index(I)];
                        }
                      }
                    });
}

void CoarseSpace::build_coarse_factors(const PassProducts& products) {
  const std::size_t m = size();
  Fc_.resize(Eigen::Index(m), Eigen::Index(m));
  const std::size_t K = products.in.size();
  if (K > 3 || products.out.size() != K) {
    throw std::invalid_argument("CoarseSpace: at most three products, each with its output");
  }
  const double* in[3] = {};
  double* out[3] = {};
  for (std::size_t k = 0; k < K; ++k) {
    products.out[k]->resize(Eigen::Index(s_.faces));
    in[k] = products.in[k]->data();
    out[k] = products.out[k]->data();
  }
  switch (K) {
    case 0:
      coarse_pass<0>(in, out);
      break;
    case 1:
      coarse_pass<1>(in, out);
      break;
    case 2:
      coarse_pass<2>(in, out);
      break;
    default:
      coarse_pass<3>(in, out);
  }
}

bool CoarseSpace::factor(const Eigen::VectorXd& a) {
  if (factored_a_.size() == a.size()) {
    bool close = true;
    for (const Pair& p : pairs_) {
      close = close && std::abs(a[p.node] - factored_a_[p.node]) <= kRefactor * factored_a_[p.node];
    }
    if (close) return factored_ok_;
  }
  factored_a_ = a;
  factored_ok_ = factor_now(a);
  return factored_ok_;
}

bool CoarseSpace::factor_now(const Eigen::VectorXd& a) {
  const Eigen::Index m = Eigen::Index(size());
  // W_c = diag(d) + sum over unknown nodes k of (c_k / A) c_k^T / a_k, with c_I,k the pairs'
  // weights (a node on one aggregate adds to the diagonal); S_c = I - W_c F_c.
  Eigen::VectorXd diagonal = reflected_;
  Eigen::MatrixXd Sc = Eigen::MatrixXd::Identity(m, m);
  Eigen::RowVectorXd received(m);
  for (std::size_t p = 0; p < pairs_.size();) {
    std::size_t q = p;
    while (q < pairs_.size() && pairs_[q].node == pairs_[p].node) ++q;
    const double ak = a[pairs_[p].node];
    if (q == p + 1) {
      const Pair& only = pairs_[p];
      diagonal[only.aggregate] += only.weight * only.weight / (area_[only.aggregate] * ak);
    } else {
      received.setZero();
      for (std::size_t r = p; r < q; ++r)
        received += pairs_[r].weight * Fc_.row(pairs_[r].aggregate);
      for (std::size_t r = p; r < q; ++r) {
        const std::uint32_t I = pairs_[r].aggregate;
        Sc.row(I) -= pairs_[r].weight / (area_[I] * ak) * received;
      }
    }
    p = q;
  }
  Sc.noalias() -= diagonal.asDiagonal() * Fc_;
  if (!Sc.allFinite()) return false;
  lu_.compute(Sc);
  return lu_.rcond() > kSmallestRcond;
}

void CoarseSpace::apply(const Eigen::VectorXd& in, Eigen::VectorXd* out) const {
  const std::size_t n = s_.faces;
  coarse_ = Eigen::VectorXd::Zero(Eigen::Index(size()));
  for (std::size_t i = 0; i < n; ++i) coarse_[aggregate_[i]] += s_.area[i] * in[Eigen::Index(i)];
  coarse_.array() /= area_.array();
  const Eigen::VectorXd correction = lu_.solve(coarse_) - coarse_;
  out->resize(Eigen::Index(n));
  for (std::size_t i = 0; i < n; ++i) {
    (*out)[Eigen::Index(i)] = in[Eigen::Index(i)] + correction[aggregate_[i]];
  }
}

}  // namespace exchange_detail
}  // namespace hearthray
