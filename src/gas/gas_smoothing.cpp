// Reciprocity and closure of gas exchange areas (see gas_zones.hpp).
#include <algorithm>
#include <cmath>

#include "exchange/exchange_krylov.hpp"
#include "hearthray/gas_zones.hpp"

namespace hearthray {

namespace {

// Pooling weights N_i / s_i of the rows (see symmetric_estimate).
Eigen::VectorXd pooling_weights(const GasExchange& x, std::size_t g) {
  const Eigen::Index n = Eigen::Index(x.rows());
  Eigen::VectorXd w(n);
  for (Eigen::Index i = 0; i < n; ++i) {
    const double scale = std::size_t(i) < x.patch_count ? x.areas[std::size_t(i)]
                                                        : 4 * x.k[g] * x.grid.cell_volume();
    w(i) = scale > 0 ? double(x.rays[std::size_t(i)]) / scale : 0.0;
  }
  return w;
}

// The two estimates S_ij (from row i's rays) and S_ji (from row j's) of one symmetric exchange
// area, pooled with weights N_i / s_i: each of row i's N_i rays scores s_i x with x in [0, 1]
// (s_i = A_i for a patch, 4 k V_cell for a zone), so the variance of its estimate of a small
// exchange area m is about s_i m / N_i. The weights come from the ray counts, not from sample
// variances, which are unreliable for the rare hits of small exchange areas (pooling as the
// maximum-likelihood smoothing of Daun, Morton & Howell 2005 pools hit counts).
Eigen::MatrixXd symmetric_estimate(const GasExchange& x, std::size_t g) {
  const Eigen::MatrixXd& S = x.S[g];
  const Eigen::Index n = S.rows();
  const Eigen::VectorXd w = pooling_weights(x, g);
  Eigen::MatrixXd M = Eigen::MatrixXd::Zero(n, n);
  for (Eigen::Index i = 0; i < n; ++i) {
    M(i, i) = S(i, i);
    for (Eigen::Index j = i + 1; j < n; ++j) {
      const double sum = w(i) + w(j);
      const double m = sum > 0 ? (w(i) * S(i, j) + w(j) * S(j, i)) / sum : 0.0;
      M(i, j) = M(j, i) = m;
    }
  }
  return M;
}

GasSmoothingSummary smooth_dense(GasExchange& x, double tolerance, int max_iterations) {
  GasSmoothingSummary summary;
  summary.converged = true;
  const Eigen::Index n = Eigen::Index(x.rows());
  for (std::size_t g = 0; g < x.gas_count(); ++g) {
    const Eigen::MatrixXd raw = x.S[g];
    Eigen::MatrixXd M = symmetric_estimate(x, g);
    Eigen::VectorXd target(n);
    for (Eigen::Index i = 0; i < n; ++i)
      target(i) = std::max(0.0, x.row_target(g, std::size_t(i)) - x.lost[g](i));
    // Symmetric Sinkhorn-Knopp (Knight 2008): d_i <- sqrt(d_i t_i / (M d)_i) converges to
    // d_i (M d)_i = t_i for a symmetric non-negative M with total support. Rows with a zero
    // target (the zones of a clear gas) are left out.
    Eigen::VectorXd d = Eigen::VectorXd::Ones(n);
    for (Eigen::Index i = 0; i < n; ++i)
      if (target(i) == 0) d(i) = 0;
    int it = 0;
    double error = 0;
    for (; it < max_iterations; ++it) {
      const Eigen::VectorXd r = M * d;
      error = 0;
      for (Eigen::Index i = 0; i < n; ++i) {
        if (target(i) == 0) continue;
        error = std::max(error, std::fabs(d(i) * r(i) - target(i)) / target(i));
      }
      if (error < tolerance) break;
      for (Eigen::Index i = 0; i < n; ++i)
        if (target(i) > 0 && r(i) > 0) d(i) = std::sqrt(d(i) * target(i) / r(i));
    }
    summary.iterations = std::max(summary.iterations, it);
    if (error >= tolerance) summary.converged = false;
    Eigen::MatrixXd S = d.asDiagonal() * M * d.asDiagonal();
    // Report on the result: row sums, symmetry, and how far each entry moved.
    const double scale = S.cwiseAbs().maxCoeff();
    for (Eigen::Index i = 0; i < n; ++i) {
      const double t = x.row_target(g, std::size_t(i));
      if (t > 0)
        summary.max_row_error =
            std::max(summary.max_row_error, std::fabs(S.row(i).sum() + x.lost[g](i) - t) / t);
      for (Eigen::Index j = 0; j < n; ++j) {
        if (scale > 0)
          summary.max_reciprocity_error =
              std::max(summary.max_reciprocity_error, std::fabs(S(i, j) - S(j, i)) / scale);
        // Standard errors below 1e-9 of the row's target are taken as 1e-9 of it: entries that
        // small (a single ray through an opaque gray gas, 1e-40 m^2) carry no weight.
        const double sigma = std::max(x.sigma[g](i, j), 1e-9 * t);
        if (x.sigma[g](i, j) > 0)
          summary.max_correction_sigma =
              std::max(summary.max_correction_sigma, std::fabs(S(i, j) - raw(i, j)) / sigma);
      }
    }
    x.S[g] = std::move(S);
  }
  return summary;
}

// The pooled symmetric estimate on the union of the patterns of S and S^T (sparse storage),
// each entry by the same expression as the dense one; zeros left out.
SparseMatrix symmetric_estimate_sparse(const GasExchange& x, std::size_t g) {
  const SparseMatrix& S = x.sparse_S[g];
  const SparseMatrix T = S.transpose();  // row i holds S_ji
  const Eigen::VectorXd w = pooling_weights(x, g);
  SparseMatrix M(S.rows(), S.cols());
  M.reserve(S.nonZeros() + T.nonZeros());
  for (Eigen::Index i = 0; i < S.rows(); ++i) {
    M.startVec(i);
    SparseMatrix::InnerIterator a(S, i), b(T, i);
    while (a || b) {
      const Eigen::Index j = !b || (a && a.col() < b.col()) ? a.col() : b.col();
      const double sij = a && a.col() == j ? a.value() : 0.0;
      const double sji = b && b.col() == j ? b.value() : 0.0;
      if (a && a.col() == j) ++a;
      if (b && b.col() == j) ++b;
      double m = sij;
      if (j != i) {
        const double sum = w(i) + w(j);
        m = sum > 0 ? (w(i) * sij + w(j) * sji) / sum : 0.0;
      }
      if (m != 0) M.insertBack(i, j) = m;
    }
  }
  M.finalize();
  return M;
}

// Row sums, symmetry and corrections of the smoothed S against the raw one (same rules as the
// dense report).
void report_sparse(const GasExchange& x, std::size_t g, const SparseMatrix& raw,
                   const SparseMatrix& S, GasSmoothingSummary& summary) {
  double scale = 0;
  for (Eigen::Index e = 0; e < S.nonZeros(); ++e)
    scale = std::max(scale, std::fabs(S.valuePtr()[e]));
  const SparseMatrix T = S.transpose();
  const SparseMatrix& sigma = x.sparse_sigma[g];
  for (Eigen::Index i = 0; i < S.rows(); ++i) {
    const double t = x.row_target(g, std::size_t(i));
    double row = 0;
    SparseMatrix::InnerIterator b(T, i);
    for (SparseMatrix::InnerIterator a(S, i); a; ++a) {
      row += a.value();
      // S's pattern is symmetric (the pooled estimate's is): T walks the same columns.
      const double transposed = b && b.col() == a.col() ? b.value() : S.coeff(a.col(), i);
      if (b && b.col() == a.col()) ++b;
      if (scale > 0)
        summary.max_reciprocity_error =
            std::max(summary.max_reciprocity_error, std::fabs(a.value() - transposed) / scale);
    }
    if (t > 0)
      summary.max_row_error =
          std::max(summary.max_row_error, std::fabs(row + x.lost[g](i) - t) / t);
    SparseMatrix::InnerIterator smooth(S, i);
    SparseMatrix::InnerIterator se(sigma, i);
    for (SparseMatrix::InnerIterator r(raw, i); r; ++r, ++se) {
      while (smooth && smooth.col() < r.col()) ++smooth;
      const double now = smooth && smooth.col() == r.col() ? smooth.value() : 0.0;
      if (!(se.value() > 0)) continue;
      const double s = std::max(se.value(), 1e-9 * t);
      summary.max_correction_sigma =
          std::max(summary.max_correction_sigma, std::fabs(now - r.value()) / s);
    }
  }
}

// The same pooling and symmetric Sinkhorn-Knopp scaling as the dense path, on sparse rows:
// each iteration one sparse product (rows summed in their stored order, so the result does not
// depend on the thread count).
GasSmoothingSummary smooth_sparse(GasExchange& x, double tolerance, int max_iterations) {
  GasSmoothingSummary summary;
  summary.converged = true;
  const Eigen::Index n = Eigen::Index(x.rows());
  for (std::size_t g = 0; g < x.gas_count(); ++g) {
    const SparseMatrix M = symmetric_estimate_sparse(x, g);
    Eigen::VectorXd target(n), d = Eigen::VectorXd::Ones(n), r;
    for (Eigen::Index i = 0; i < n; ++i) {
      target(i) = std::max(0.0, x.row_target(g, std::size_t(i)) - x.lost[g](i));
      if (target(i) == 0) d(i) = 0;
    }
    int it = 0;
    double error = 0;
    for (; it < max_iterations; ++it) {
      exchange_detail::multiply(M, d, &r);
      error = 0;
      for (Eigen::Index i = 0; i < n; ++i)
        if (target(i) > 0) error = std::max(error, std::fabs(d(i) * r(i) - target(i)) / target(i));
      if (error < tolerance) break;
      for (Eigen::Index i = 0; i < n; ++i)
        if (target(i) > 0 && r(i) > 0) d(i) = std::sqrt(d(i) * target(i) / r(i));
    }
    summary.iterations = std::max(summary.iterations, it);
    if (error >= tolerance) summary.converged = false;
    SparseMatrix S = M;
    for (Eigen::Index i = 0; i < n; ++i)
      for (SparseMatrix::InnerIterator a(S, i); a; ++a)
        a.valueRef() = d(i) * a.value() * d(a.col());
    report_sparse(x, g, x.sparse_S[g], S, summary);
    x.sparse_S[g].swap(S);
  }
  return summary;
}

}  // namespace

GasSmoothingSummary smooth_gas_exchange(GasExchange& x, double tolerance, int max_iterations) {
  const GasSmoothingSummary summary = x.dense() ? smooth_dense(x, tolerance, max_iterations)
                                                : smooth_sparse(x, tolerance, max_iterations);
  x.smoothed = true;
  x.max_correction_sigma = summary.max_correction_sigma;
  return summary;
}

}  // namespace hearthray
