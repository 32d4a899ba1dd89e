// Deterministic sparse product and restarted GMRES for the exchange solver's large path.
#include "exchange/exchange_krylov.hpp"

#include <tbb/blocked_range.h>
#include <tbb/parallel_for.h>

#include <algorithm>
#include <cmath>
#include <limits>

namespace hearthray {
namespace exchange_detail {

namespace {

// y_k = F x_k for K vectors in one pass over F, each row's sum in column order whatever the
// threads (so each y_k is bitwise what a product alone gives).
template <int K>
void multiply_rows(const SparseMatrix& F, const double* const (&in)[K], double* const (&out)[K]) {
  // Rows of a few hundred non-zeros each: blocks of 64 rows are large enough to amortise the
  // scheduling and small enough to balance rows of very different lengths.
  tbb::parallel_for(tbb::blocked_range<Eigen::Index>(0, F.rows(), 64),
                    [&](const tbb::blocked_range<Eigen::Index>& rows) {
                      for (Eigen::Index i = rows.begin(); i != rows.end(); ++i) {
                        double sum[K] = {};
                        for (SparseMatrix::InnerIterator it(F, i); it; ++it) {
                          for (int k = 0; k < K; ++k) sum[k] += it.value() * in[k][it.col()];
                        }
                        for (int k = 0; k < K; ++k) out[k][i] = sum[k];
                      }
                    });
}

}  // namespace

void multiply(const SparseMatrix& F, const Eigen::VectorXd& x, Eigen::VectorXd* y) {
  y->resize(F.rows());
  multiply_rows<1>(F, {x.data()}, {y->data()});
}

void multiply_two(const SparseMatrix& F, const Eigen::VectorXd& x1, const Eigen::VectorXd& x2,
                  Eigen::VectorXd* y1, Eigen::VectorXd* y2) {
  y1->resize(F.rows());
  y2->resize(F.rows());
  multiply_rows<2>(F, {x1.data(), x2.data()}, {y1->data(), y2->data()});
}

void multiply_three(const SparseMatrix& F, const Eigen::VectorXd& x1, const Eigen::VectorXd& x2,
                    const Eigen::VectorXd& x3, Eigen::VectorXd* y1, Eigen::VectorXd* y2,
                    Eigen::VectorXd* y3) {
  y1->resize(F.rows());
  y2->resize(F.rows());
  y3->resize(F.rows());
  multiply_rows<3>(F, {x1.data(), x2.data(), x3.data()}, {y1->data(), y2->data(), y3->data()});
}

namespace {

// Column j of the Hessenberg matrix from w = A M^-1 v_j: w orthogonalised against the basis
// v_0 .. v_j by classical Gram-Schmidt, twice ("twice is enough": Giraud, Langou & Rozloznik
// 2005); then the earlier Givens rotations, and a new one that keeps H upper triangular and
// g the rotated residual. *h_next is |w| after orthogonalisation. Returns false on breakdown
// (A z = 0 for a non-zero z: the operator is singular here).
bool arnoldi_column(const Eigen::MatrixXd& V, Eigen::Index j, Eigen::VectorXd* w,
                    Eigen::MatrixXd* H, Eigen::VectorXd* cs, Eigen::VectorXd* sn,
                    Eigen::VectorXd* g, double* h_next) {
  const auto basis = V.leftCols(j + 1);
  Eigen::VectorXd h = basis.transpose() * *w;
  w->noalias() -= basis * h;
  const Eigen::VectorXd h2 = basis.transpose() * *w;
  w->noalias() -= basis * h2;
  h += h2;
  H->col(j).head(j + 1) = h;
  *h_next = w->norm();
  (*H)(j + 1, j) = *h_next;
  for (Eigen::Index i = 0; i < j; ++i) {
    const double a = (*H)(i, j), c = (*H)(i + 1, j);
    (*H)(i, j) = (*cs)[i] * a + (*sn)[i] * c;
    (*H)(i + 1, j) = -(*sn)[i] * a + (*cs)[i] * c;
  }
  const double d = std::hypot((*H)(j, j), *h_next);
  if (!(d > 0)) return false;
  (*cs)[j] = (*H)(j, j) / d;
  (*sn)[j] = *h_next / d;
  (*H)(j, j) = d;
  (*H)(j + 1, j) = 0;
  (*g)[j + 1] = -(*sn)[j] * (*g)[j];
  (*g)[j] *= (*cs)[j];
  return true;
}

}  // namespace

namespace {

// Round-off allowed for, relative to the sizes of the terms, in a residual taken as a
// combination of products (b - sum_j y_j A z_j): the products' own sums (rows of thousands of
// terms) and the combination's. Loose tolerances (1e-3 to 1e-8, the Newton steps' usual
// ones) are far above it; a tolerance near it is checked by a product.
constexpr double kCombinationRoundOff = 4096 * std::numeric_limits<double>::epsilon();

void apply_preconditioner(const LinearOperator& precondition, const Eigen::VectorXd& in,
                          Eigen::VectorXd* out) {
  if (precondition) {
    precondition(in, out);
  } else {
    *out = in;
  }
}

// What a cycle of j steps has made: its Hessenberg matrix H rotated to triangular (T, its top
// j x j) with the rotated residual g; with weights a (KrylovOptions::zero_sum), c_q = a^T A z_q
// and d = a^T r at the cycle's start.
struct Cycle {
  const Eigen::MatrixXd& H;
  const Eigen::VectorXd& g;
  const Eigen::VectorXd* c;  // null: no constraint
  double d;
};

// The coefficients y of the cycle's update x += M^-1 V y and the norm of the residual it
// leaves: the least ||g - H y|| is y0 = T^-1 g_head, residual |g_j|. With the constraint
// c^T y = d (then a^T r = 0 after the update): y = y0 + e T^-1 v / |v|^2, v = T^-T c,
// e = d - c^T y0, the residual's norm rising to sqrt(g_j^2 + e^2 / |v|^2) (the least t with
// v^T t = e added to T y0 - g_head = 0). Left unconstrained if v is 0 or not finite.
double cycle_solution(const Cycle& cycle, Eigen::Index j, Eigen::VectorXd* y) {
  const auto T = cycle.H.topLeftCorner(j, j).triangularView<Eigen::Upper>();
  *y = T.solve(cycle.g.head(j));
  const double unconstrained = std::abs(cycle.g[j]);
  if (cycle.c == nullptr) return unconstrained;
  const Eigen::VectorXd v = T.transpose().solve(cycle.c->head(j));
  const double v2 = v.squaredNorm();
  const double e = cycle.d - cycle.c->head(j).dot(*y);
  if (!(v2 > 0) || !std::isfinite(v2) || !std::isfinite(e)) return unconstrained;
  *y += (e / v2) * T.solve(v);
  return std::sqrt(unconstrained * unconstrained + e * e / v2);
}

// The end of a cycle of j > 0 steps: x += M^-1 V y, y from cycle_solution; when the products
// are kept (Bx given), r -= AZ y and Bx += BZ y, adding the round-off bound of that combination
// to *drift.
void close_cycle(const Eigen::MatrixXd& V, const Cycle& cycle, Eigen::Index j,
                 const LinearOperator& precondition, const Eigen::MatrixXd& AZ,
                 const Eigen::MatrixXd& BZ, Eigen::VectorXd* x, Eigen::VectorXd* r,
                 Eigen::VectorXd* Bx, double* drift) {
  Eigen::VectorXd y;
  cycle_solution(cycle, j, &y);
  const Eigen::VectorXd update = V.leftCols(j) * y;
  Eigen::VectorXd z;
  apply_preconditioner(precondition, update, &z);
  *x += z;
  if (Bx == nullptr) return;
  double size = r->norm();
  for (Eigen::Index q = 0; q < j; ++q) size += std::abs(y[q]) * AZ.col(q).norm();
  r->noalias() -= AZ.leftCols(j) * y;
  Bx->noalias() += BZ.leftCols(j) * y;
  *drift += kCombinationRoundOff * size;
}

// The loop of both forms; Bx null: the plain form (the residual by a product after each cycle).
KrylovSummary restarted_gmres(const PairedOperator& A, const LinearOperator& precondition,
                              const Eigen::VectorXd& b, const KrylovOptions& options,
                              Eigen::VectorXd* x, Eigen::VectorXd* Bx) {
  using Eigen::Index;
  const Index n = b.size();
  x->setZero(n);
  if (Bx != nullptr) Bx->setZero(n);
  KrylovSummary summary;
  const double b_norm = b.norm();
  if (!(b_norm > 0)) {
    summary.converged = std::isfinite(b_norm);
    return summary;
  }
  const Index m = std::max<Index>(1, std::min<Index>(options.restart, n));
  const double target = options.tolerance * b_norm;
  Eigen::MatrixXd V(n, m + 1);                          // orthonormal Krylov basis
  Eigen::MatrixXd H = Eigen::MatrixXd::Zero(m + 1, m);  // Hessenberg, rotated to triangular
  Eigen::MatrixXd AZ, BZ;                               // A z_j and B z_j of the cycle
  if (Bx != nullptr) {
    AZ.resize(n, m);
    BZ.resize(n, m);
  }
  Eigen::VectorXd cs(m), sn(m), g(m + 1), c(m);
  const Eigen::VectorXd* weights = options.zero_sum;
  Cycle cycle{H, g, weights != nullptr ? &c : nullptr, 0.0};
  Eigen::VectorXd r = b, w(n), z(n), side;
  double beta = b_norm;  // ||b - A x|| for the current x (x = 0 at the start)
  // Bound on the round-off in r since it was last measured by a product (none yet: r = b).
  double drift = 0;
  bool broke_down = false;
  while (beta > target && summary.iterations < options.max_iterations) {
    V.col(0) = r / beta;
    H.setZero();
    g.setZero();
    g[0] = beta;
    if (weights != nullptr) cycle.d = weights->dot(r);
    Index j = 0;
    while (j < m && summary.iterations < options.max_iterations) {
      apply_preconditioner(precondition, V.col(j), &z);
      if (Bx != nullptr) {
        A(z, &w, &side);
        AZ.col(j) = w;
        BZ.col(j) = side;
      } else {
        A(z, &w, nullptr);
      }
      ++summary.iterations;
      if (weights != nullptr) c[j] = weights->dot(w);
      double h_next = 0;
      if (!arnoldi_column(V, j, &w, &H, &cs, &sn, &g, &h_next)) {
        broke_down = true;
        break;
      }
      ++j;
      // The residual the cycle would leave if it ended here.
      Eigen::VectorXd y;
      const double left = weights != nullptr ? cycle_solution(cycle, j, &y) : std::abs(g[j]);
      if (!(h_next > 0) || left <= target) break;
      V.col(j) = w / h_next;
    }
    const bool combined = Bx != nullptr && j > 0;  // r and Bx from this cycle's products
    if (j > 0) close_cycle(V, cycle, j, precondition, AZ, BZ, x, &r, Bx, &drift);
    const double previous = beta;
    if (combined) beta = r.norm();
    const bool settled = combined && beta + drift <= target;
    const bool last = broke_down || summary.iterations >= options.max_iterations || j == 0;
    if (!settled && (!combined || beta <= target || last || !std::isfinite(beta))) {
      // The true residual, measured by a product (and restarted from).
      A(*x, &w, Bx);
      r = b - w;
      beta = r.norm();
      drift = 0;
    }
    if (broke_down || !std::isfinite(beta) || (j == 0 && beta >= previous)) break;
  }
  summary.relative_residual = beta / b_norm;
  summary.converged = beta <= target;
  summary.breakdown = broke_down && !summary.converged;
  return summary;
}

}  // namespace

KrylovSummary gmres(const LinearOperator& A, const LinearOperator& precondition,
                    const Eigen::VectorXd& b, const KrylovOptions& options, Eigen::VectorXd* x) {
  const PairedOperator plain = [&A](const Eigen::VectorXd& in, Eigen::VectorXd* out,
                                    Eigen::VectorXd*) { A(in, out); };
  return restarted_gmres(plain, precondition, b, options, x, nullptr);
}

KrylovSummary gmres(const PairedOperator& A, const LinearOperator& precondition,
                    const Eigen::VectorXd& b, const KrylovOptions& options, Eigen::VectorXd* x,
                    Eigen::VectorXd* Bx) {
  return restarted_gmres(A, precondition, b, options, x, Bx);
}

}  // namespace exchange_detail
}  // namespace hearthray
