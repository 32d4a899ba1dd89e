// Constrained maximum-likelihood smoothing of Monte Carlo exchange factors (Daun, Morton &
// Howell, J. Heat Transfer 127(10), 2005).
//
// With n_ij = N_ij + N_ji (i != j) and c_i = N_ii + E_i + B_i (self hits, escaped and
// back-face rays), the stationary point of the likelihood gives
//   S_ij = n_ij / (mu_i + mu_j),  S_ii = N_ii / mu_i,  S_is = E_i / mu_i,  S_ib = B_i / mu_i,
// and the row sums sum_j S_ij + S_is + S_ib = A_i fix the multipliers mu. These row equations
// are the gradient of the convex function
//   Phi(mu) = sum_i A_i mu_i - sum_{i<j} n_ij ln(mu_i + mu_j) - sum_i c_i ln mu_i,
// so we minimise Phi by Newton's method with a backtracking (Armijo) line search. Phi is defined
// where every logarithm's argument is positive: mu_i + mu_j > 0 for every pair that exchanged
// rays and mu_i > 0 where c_i > 0. A multiplier may thus go negative (a large patch seen by
// many, with no losses), and the step keeps to that domain rather than to mu > 0. The Hessian
// has the sparsity of the counts, is symmetric positive (semi)definite and diagonally
// dominant: memory stays O(non-zeros) at any size.
#include "hearthray/smoothing.hpp"

#include <Eigen/IterativeLinearSolvers>
#include <Eigen/SparseCholesky>
#include <algorithm>
#include <cmath>
#include <cstdio>
#include <limits>
#include <string>
#include <vector>

#include "hearthray/error.hpp"

namespace hearthray {

bool SmoothingOptions::IsValid(std::string* error) const {
  auto fail = [error](const std::string& message) {
    if (error != nullptr) *error = message;
    return false;
  };
  if (!std::isfinite(tolerance) || tolerance <= 0 || tolerance >= 1) {
    return fail("SmoothingOptions::tolerance must be in (0, 1), got " + std::to_string(tolerance));
  }
  if (max_iterations < 1) {
    return fail("SmoothingOptions::max_iterations must be at least 1, got " +
                std::to_string(max_iterations));
  }
  return true;
}

namespace {

using ColMatrix = Eigen::SparseMatrix<double>;

// Up to this many patches the Newton system is factorised exactly (sparse LDL^T); beyond it,
// conjugate gradients: the view-factor graph is dense enough that the factor fills in (a
// 1400-patch random enclosure took 0.65 s with LDL^T, 0.01 s with CG), and CG keeps memory
// O(non-zeros).
constexpr std::size_t kDirectSolveLimit = 300;

struct Problem {
  std::size_t n = 0;
  ColMatrix pair;     // n_ij = N_ij + N_ji for i != j (symmetric, no diagonal)
  ColMatrix hessian;  // pattern of pair plus the diagonal; values refilled every iteration
  std::vector<double> self, escaped, back, lumped, area;  // lumped = c_i
};

Problem make_problem(const PatchSet& patches, const Tallies& t) {
  Problem p;
  p.n = patches.size();
  const auto n = static_cast<Eigen::Index>(p.n);
  p.self.assign(p.n, 0.0);
  p.escaped.resize(p.n);
  p.back.resize(p.n);
  p.lumped.resize(p.n);
  p.area.resize(p.n);
  std::vector<Eigen::Triplet<double>> triplets;
  triplets.reserve(2 * t.hit_patch.size());
  for (std::size_t i = 0; i < p.n; ++i) {
    for (std::uint64_t k = t.hit_offset[i]; k < t.hit_offset[i + 1]; ++k) {
      const std::uint32_t j = t.hit_patch[k];
      const auto count = static_cast<double>(t.hit_count[k]);
      if (count == 0) continue;
      if (j == i) {
        p.self[i] = count;
      } else {
        triplets.emplace_back(static_cast<int>(i), static_cast<int>(j), count);
        triplets.emplace_back(static_cast<int>(j), static_cast<int>(i), count);
      }
    }
    p.escaped[i] = static_cast<double>(t.escaped[i]);
    p.back[i] = static_cast<double>(t.back_face[i]);
    p.lumped[i] = p.self[i] + p.escaped[i] + p.back[i];
    p.area[i] = patches.patches[i].area;
  }
  // Integer counts below 2^53 add exactly, so n_ij and n_ji are bitwise equal.
  p.pair.resize(n, n);
  p.pair.setFromTriplets(triplets.begin(), triplets.end());
  p.pair.makeCompressed();
  triplets.clear();
  triplets.shrink_to_fit();
  ColMatrix identity(n, n);
  identity.setIdentity();
  p.hessian = p.pair + identity;
  p.hessian.makeCompressed();
  return p;
}

// The one expression for an exchange area: symmetric in (i, j) bitwise, because IEEE addition
// is commutative.
inline double exchange_area(double n_ij, double mu_i, double mu_j) {
  return n_ij / (mu_i + mu_j);
}

// Self, escaped and back-face exchange areas; a zero count stays +0 even where mu_i <= 0.
inline double own_area(double count, double mu_i) {
  return count == 0 ? 0.0 : count / mu_i;
}

// Row sums R_i = sum_j S_ij + c_i / mu_i, and max_i |sum of the row of F - 1| computed the way
// the result's F is built (each entry divided by A_i), so the stopping test sees what the user
// gets.
double evaluate_rows(const Problem& p, const std::vector<double>& mu, std::vector<double>* R) {
  double worst = 0;
  for (std::size_t i = 0; i < p.n; ++i) {
    const double a = p.area[i];
    double s_sum = 0, f_sum = 0;
    for (ColMatrix::InnerIterator it(p.pair, static_cast<Eigen::Index>(i)); it; ++it) {
      const double s = exchange_area(it.value(), mu[i], mu[static_cast<std::size_t>(it.row())]);
      s_sum += s;
      f_sum += s / a;
    }
    const double s_self = own_area(p.self[i], mu[i]), s_esc = own_area(p.escaped[i], mu[i]),
                 s_back = own_area(p.back[i], mu[i]);
    s_sum += s_self + s_esc + s_back;
    f_sum += s_self / a + s_esc / a + s_back / a;
    (*R)[i] = s_sum;
    worst = std::max(worst, std::abs(f_sum - 1));
  }
  return worst;
}

// Hessian of Phi, H_ij = n_ij / (mu_i + mu_j)^2 and H_ii = sum_j H_ij + c_i / mu_i^2, scaled
// symmetrically to a unit diagonal (D H D, D = diag(H_ii^-1/2)) so that the solve does not
// depend on the spread of areas and multipliers. Returns D.
Eigen::VectorXd fill_hessian(Problem& p, const std::vector<double>& mu) {
  const auto n = static_cast<Eigen::Index>(p.n);
  Eigen::VectorXd diagonal(n);
  for (Eigen::Index i = 0; i < n; ++i) {
    const auto k = static_cast<std::size_t>(i);
    diagonal[i] = p.lumped[k] == 0 ? 0.0 : p.lumped[k] / (mu[k] * mu[k]);
  }
  std::vector<Eigen::Index> diagonal_at(p.n);
  double* value = p.hessian.valuePtr();
  const double* pair_value = p.pair.valuePtr();
  for (Eigen::Index j = 0; j < n; ++j) {
    // hessian's column j is pair's column j with the diagonal merged in at row j.
    Eigen::Index pk = p.pair.outerIndexPtr()[j];
    for (Eigen::Index k = p.hessian.outerIndexPtr()[j]; k < p.hessian.outerIndexPtr()[j + 1]; ++k) {
      const Eigen::Index i = p.hessian.innerIndexPtr()[k];
      if (i == j) {
        diagonal_at[static_cast<std::size_t>(i)] = k;  // filled once every partner is added
        continue;
      }
      const double sum = mu[static_cast<std::size_t>(i)] + mu[static_cast<std::size_t>(j)];
      value[k] = pair_value[pk++] / (sum * sum);
      diagonal[i] += value[k];
    }
  }
  const Eigen::VectorXd scale = diagonal.cwiseSqrt().cwiseInverse();
  for (Eigen::Index j = 0; j < n; ++j) {
    for (Eigen::Index k = p.hessian.outerIndexPtr()[j]; k < p.hessian.outerIndexPtr()[j + 1]; ++k) {
      value[k] *= scale[j] * scale[p.hessian.innerIndexPtr()[k]];
    }
  }
  for (Eigen::Index i = 0; i < n; ++i) value[diagonal_at[static_cast<std::size_t>(i)]] = 1;
  return scale;
}

bool solve_newton(const Problem& p, const Eigen::VectorXd& rhs, Eigen::VectorXd* y,
                  std::string* why) {
  if (p.n <= kDirectSolveLimit) {
    Eigen::SimplicialLDLT<ColMatrix> ldlt(p.hessian);
    if (ldlt.info() != Eigen::Success) {
      *why = "the Newton system could not be factorised";
      return false;
    }
    *y = ldlt.solve(rhs);
  } else {
    Eigen::ConjugateGradient<ColMatrix, Eigen::Lower | Eigen::Upper> cg;
    cg.setTolerance(1e-12);
    cg.setMaxIterations(static_cast<Eigen::Index>(std::min<std::size_t>(p.n, 5000)));
    cg.compute(p.hessian);
    *y = cg.solve(rhs);  // an inexact step is still a descent direction; the line search checks
  }
  if (!y->allFinite()) {
    *why = "the Newton step is not finite (the rays give no unique smoothed matrix)";
    return false;
  }
  return true;
}

// Phi(mu + alpha delta) - Phi(mu), written with log1p so that small changes are not lost to
// cancellation between two large values of Phi. Infinite outside Phi's domain.
double phi_change(const Problem& p, const std::vector<double>& mu, const Eigen::VectorXd& delta,
                  double alpha) {
  double linear = 0, logs = 0;
  for (std::size_t i = 0; i < p.n; ++i) {
    const double di = delta[static_cast<Eigen::Index>(i)];
    linear += p.area[i] * alpha * di;
    if (p.lumped[i] > 0) {
      const double t = alpha * di / mu[i];
      if (!(t > -1)) return std::numeric_limits<double>::infinity();
      logs += p.lumped[i] * std::log1p(t);
    }
    for (ColMatrix::InnerIterator it(p.pair, static_cast<Eigen::Index>(i)); it; ++it) {
      const auto j = static_cast<std::size_t>(it.row());
      if (j <= i) continue;
      const double t = alpha * (di + delta[it.row()]) / (mu[i] + mu[j]);
      if (!(t > -1)) return std::numeric_limits<double>::infinity();
      logs += it.value() * std::log1p(t);
    }
  }
  return linear - logs;
}

// Largest step (up to 1) that keeps 5 % of every logarithm's argument: mu_i + mu_j for the
// pairs, mu_i where c_i > 0.
double step_to_boundary(const Problem& p, const std::vector<double>& mu,
                        const Eigen::VectorXd& delta) {
  double alpha = 1;
  for (std::size_t i = 0; i < p.n; ++i) {
    const double di = delta[static_cast<Eigen::Index>(i)];
    if (p.lumped[i] > 0 && di < 0) alpha = std::min(alpha, 0.95 * mu[i] / -di);
    for (ColMatrix::InnerIterator it(p.pair, static_cast<Eigen::Index>(i)); it; ++it) {
      const auto j = static_cast<std::size_t>(it.row());
      const double d = di + delta[it.row()];
      if (j > i && d < 0) alpha = std::min(alpha, 0.95 * (mu[i] + mu[j]) / -d);
    }
  }
  return alpha;
}

std::string format(const char* fmt, double a, double b = 0, double c = 0) {
  char buffer[256];
  std::snprintf(buffer, sizeof buffer, fmt, a, b, c);
  return buffer;
}

// Standard error used to express a correction, with the proportion kept at least one ray away
// from 0 and 1: a zero count still carries an uncertainty of about one ray.
double correction_sigma(double f, std::uint64_t rays) {
  const double n = static_cast<double>(rays);
  const double lo = std::min(0.5, 1 / n);
  const double q = std::clamp(f, lo, 1 - lo);
  return std::sqrt(q * (1 - q) / n);
}

// The result from the multipliers: F_ij = S_ij / A_i on the pattern of the counts (a pair
// with no ray either way stays absent), and the largest change from the raw factors.
ViewFactors assemble(const Problem& p, const std::vector<double>& mu, const ViewFactors& raw) {
  const std::size_t n = p.n;
  ViewFactors vf;
  vf.names = raw.names;
  vf.areas = raw.areas;
  vf.rays = raw.rays;
  vf.smoothed = true;
  vf.to_surroundings.resize(n);
  vf.to_back_faces.resize(n);
  vf.F.resize(static_cast<Eigen::Index>(n), static_cast<Eigen::Index>(n));
  Eigen::VectorXi per_row(static_cast<Eigen::Index>(n));
  for (std::size_t i = 0; i < n; ++i) {
    const auto c = static_cast<Eigen::Index>(i);
    per_row[c] = static_cast<int>(p.pair.outerIndexPtr()[c + 1] - p.pair.outerIndexPtr()[c]) +
                 (p.self[i] > 0 ? 1 : 0);
  }
  vf.F.reserve(per_row);
  auto note_correction = [&](std::size_t i, double smoothed, double before) {
    if (smoothed == 0 && before == 0) return;
    const double sigma = correction_sigma(std::max(smoothed, before), raw.rays[i]);
    vf.max_correction_sigma =
        std::max(vf.max_correction_sigma, std::abs(smoothed - before) / sigma);
  };
  for (std::size_t i = 0; i < n; ++i) {
    const double a = p.area[i];
    const auto row = static_cast<Eigen::Index>(i);
    SparseMatrix::InnerIterator raw_it(raw.F, row);
    auto raw_at = [&](Eigen::Index col) {  // merge walk: columns are visited in ascending order
      while (raw_it && raw_it.col() < col) ++raw_it;
      return (raw_it && raw_it.col() == col) ? raw_it.value() : 0.0;
    };
    auto put = [&](Eigen::Index col, double f) {
      vf.F.insert(row, col) = f;
      note_correction(i, f, raw_at(col));
    };
    bool self_done = p.self[i] == 0;
    // pair is symmetric: its column i lists row i's partners in ascending order.
    for (ColMatrix::InnerIterator it(p.pair, row); it; ++it) {
      if (!self_done && it.row() > row) {
        put(row, own_area(p.self[i], mu[i]) / a);
        self_done = true;
      }
      put(it.row(), exchange_area(it.value(), mu[i], mu[static_cast<std::size_t>(it.row())]) / a);
    }
    if (!self_done) put(row, own_area(p.self[i], mu[i]) / a);
    vf.to_surroundings[i] = own_area(p.escaped[i], mu[i]) / a;
    vf.to_back_faces[i] = own_area(p.back[i], mu[i]) / a;
    note_correction(i, vf.to_surroundings[i], raw.to_surroundings[i]);
    note_correction(i, vf.to_back_faces[i], raw.to_back_faces[i]);
  }
  vf.F.makeCompressed();
  return vf;
}

// Row and reciprocity errors measured on the final matrix: what the user receives.
void measure(const ViewFactors& vf, SmoothingSummary* s) {
  const std::size_t n = vf.size();
  s->max_row_error = 0;
  for (std::size_t i = 0; i < n; ++i) {
    double sum = 0;
    for (SparseMatrix::InnerIterator it(vf.F, static_cast<Eigen::Index>(i)); it; ++it) {
      sum += it.value();
    }
    s->max_row_error =
        std::max(s->max_row_error, std::abs(sum + vf.to_surroundings[i] + vf.to_back_faces[i] - 1));
  }
  const SparseMatrix exchange =
      Eigen::Map<const Eigen::VectorXd>(vf.areas.data(), static_cast<Eigen::Index>(n))
          .asDiagonal() *
      vf.F;
  const SparseMatrix transposed = exchange.transpose();
  const SparseMatrix difference = exchange - transposed;
  const double largest = exchange.nonZeros() > 0 ? exchange.coeffs().maxCoeff() : 0;
  const double asymmetry =
      difference.nonZeros() > 0 ? difference.coeffs().cwiseAbs().maxCoeff() : 0;
  s->max_reciprocity_error = largest > 0 ? asymmetry / largest : 0;
  s->max_correction_sigma = vf.max_correction_sigma;
}

}  // namespace

ViewFactors smooth_view_factors(const PatchSet& patches, const Tallies& tallies,
                                const SmoothingOptions& options, SmoothingSummary* summary) {
  std::string invalid;
  if (!options.IsValid(&invalid)) throw InputError(invalid);
  const std::size_t n = patches.size();
  if (tallies.emitter_begin != 0 || tallies.rows() != n) {
    throw InputError("smoothing needs the tallies of all " + std::to_string(n) +
                     " patches, but got rows " + std::to_string(tallies.emitter_begin) + " to " +
                     std::to_string(tallies.emitter_begin + tallies.rows()) +
                     "; merge the shards first");
  }
  const ViewFactors raw = raw_view_factors(patches, tallies);  // also checks the tallies
  for (std::size_t i = 0; i < n; ++i) {
    const double a = patches.patches[i].area;
    if (!(a > 0) || !std::isfinite(a)) {
      throw InputError("patch " + std::to_string(i) + " '" + patches.patches[i].name +
                       "' has area " + std::to_string(a) + "; smoothing needs a positive area");
    }
  }

  Problem p = make_problem(patches, tallies);
  for (std::size_t i = 0; i < n; ++i) {
    if (p.lumped[i] == 0 && p.pair.outerIndexPtr()[i] == p.pair.outerIndexPtr()[i + 1]) {
      throw InputError("patch " + std::to_string(i) + " '" + patches.patches[i].name +
                       "': no ray from it or to it was counted, so its row cannot be smoothed");
    }
  }

  SmoothingSummary local;
  SmoothingSummary& s = summary != nullptr ? *summary : local;
  s = SmoothingSummary{};

  // Start from the raw estimate: with symmetric counts mu_i = N_i / A_i is already the answer.
  std::vector<double> mu(n), R(n);
  for (std::size_t i = 0; i < n; ++i) mu[i] = static_cast<double>(tallies.rays[i]) / p.area[i];

  double row_error = evaluate_rows(p, mu, &R);
  std::string failure;
  int slow_steps = 0;
  Eigen::VectorXd g(static_cast<Eigen::Index>(n)), y;
  while (row_error >= options.tolerance && s.iterations < options.max_iterations) {
    // g = grad Phi = A - R; Newton step delta = -H^-1 g, solved as (D H D) y = -D g.
    for (std::size_t i = 0; i < n; ++i) g[static_cast<Eigen::Index>(i)] = p.area[i] - R[i];
    const Eigen::VectorXd scale = fill_hessian(p, mu);
    if (!solve_newton(p, -scale.cwiseProduct(g), &y, &failure)) break;
    const Eigen::VectorXd delta = scale.cwiseProduct(y);
    const double slope = g.dot(delta);  // directional derivative of Phi: negative for descent
    if (!(slope < 0)) {
      failure = "the Newton step is not a descent direction";
      break;
    }
    // Stay inside Phi's domain, then backtrack on Phi. The slack absorbs round-off in
    // phi_change once the step is at the level of the rounding errors.
    double alpha = step_to_boundary(p, mu, delta);
    const double slack = 64 * std::numeric_limits<double>::epsilon() *
                         Eigen::Map<const Eigen::VectorXd>(p.area.data(), delta.size())
                             .cwiseProduct(delta)
                             .cwiseAbs()
                             .sum();
    bool accepted = false;
    for (int halving = 0; halving < 60 && !accepted; ++halving) {
      accepted = phi_change(p, mu, delta, alpha) <= 1e-4 * alpha * slope + alpha * slack;
      if (!accepted) alpha *= 0.5;
    }
    if (!accepted) {
      failure = "the line search found no decrease";
      break;
    }
    for (std::size_t i = 0; i < n; ++i) mu[i] += alpha * delta[static_cast<Eigen::Index>(i)];
    ++s.iterations;
    const double previous = row_error;
    row_error = evaluate_rows(p, mu, &R);
    // Near round-off the error can stop falling; do not spin to max_iterations there.
    slow_steps = (row_error > 0.5 * previous && row_error < 1e-9) ? slow_steps + 1 : 0;
    if (slow_steps >= 3) {
      failure = "progress stalled at round-off level";
      break;
    }
  }

  ViewFactors vf = assemble(p, mu, raw);
  measure(vf, &s);
  s.converged = failure.empty() && row_error < options.tolerance;
  const std::string figures = format(
      "max row error %.3g, max reciprocity error %.3g, largest correction %.3g standard errors",
      s.max_row_error, s.max_reciprocity_error, s.max_correction_sigma);
  if (s.converged) {
    s.message = "converged in " + std::to_string(s.iterations) + " Newton iterations; " + figures;
  } else {
    if (failure.empty()) {
      failure = "no convergence in " + std::to_string(options.max_iterations) + " iterations";
    }
    s.message = "smoothing did not converge (" + failure +
                format(", row error %.3g above tolerance %.3g); ", row_error, options.tolerance) +
                figures;
  }
  return vf;
}

}  // namespace hearthray
