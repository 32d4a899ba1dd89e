// Constrained maximum-likelihood smoothing of Monte Carlo exchange factors (Daun, Morton &
// Howell, J. Heat Transfer 127(10), 2005).
//
// With n_ij = N_ij + N_ji (i != j) and c_i = N_ii + E_i + B_i (self hits, escaped and
// back-face rays), the stationary point of the likelihood gives
//   S_ij = n_ij / (mu_i + mu_j),  S_ii = N_ii / mu_i,  S_is = E_i / mu_i,  S_ib = B_i / mu_i,
// and the row sums R_i = sum_j S_ij + S_is + S_ib = A_i fix the multipliers mu. These row
// equations are the gradient g = A - R of the convex function
//   Phi(mu) = sum_i A_i mu_i - sum_{i<j} n_ij ln(mu_i + mu_j) - sum_i c_i ln mu_i,
// whose Hessian H (H_ij = n_ij / (mu_i + mu_j)^2, H_ii = sum_j H_ij + c_i / mu_i^2) is
// symmetric positive definite where Phi is defined: mu_i + mu_j > 0 for every pair that
// exchanged rays and mu_i > 0 where c_i > 0. A multiplier may thus go negative (a large patch
// seen by many, with no losses); steps keep to that domain rather than to mu > 0.
//
// Newton's method on g(mu) = 0. Up to kDirectSolveLimit patches each Newton system is solved
// exactly (dense LDL^T). Above, inexact Newton: the system is solved by conjugate gradients with
// a Jacobi preconditioner, matrix-free (H v is one pass over the pair list), to a relative
// residual eta_k from Eisenstat & Walker's second forcing rule (S. C. Eisenstat, H. F. Walker,
// "Choosing the forcing terms in an inexact Newton method", SIAM J. Sci. Comput. 17(1), 1996:
// eta_k = 0.9 (|g_k| / |g_k-1|)^2 with their safeguard), kept from oversolving the last step by
// eta_k >= 0.5 tol / |g_k| (C. T. Kelley, "Iterative Methods for Linear and Nonlinear
// Equations", SIAM 1995, ch. 6). Steps are globalised by inexact Newton backtracking on
// the residual norm (Eisenstat & Walker, "Globally convergent inexact Newton methods", SIAM J.
// Optim. 4(2), 1994): a step theta*delta is taken when |g(mu + theta delta)| <=
// (1 - 1e-4 theta (1 - eta)) |g(mu)|, which needs only the row sums at the trial point, the
// pass the next step needs anyway. Norms are of the row errors g_i / A_i (2-norm), so that the
// areas' spread does not matter. Time and memory per iteration are O(non-zero tallies).
#include "hearthray/smoothing.hpp"

#include <Eigen/Dense>
#include <algorithm>
#include <cmath>
#include <cstdio>
#include <stdexcept>
#include <string>

#include "core/text.hpp"
#include "factors/view_factors_check.hpp"
#include "hearthray/error.hpp"
#include "smoothing/smoothing_problem.hpp"

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
  if (solver != Solver::automatic && solver != Solver::direct && solver != Solver::iterative) {
    return fail("SmoothingOptions::solver must be automatic, direct or iterative");
  }
  return true;
}

namespace {

using Eigen::VectorXd;
using smoothing_detail::Problem;

// Up to this many patches the Newton steps are exact (dense LDL^T, O(n^3)); above, conjugate
// gradients. Measured on random enclosures (2 cores): the iterative path is already faster at
// 100 patches (0.3 ms against 0.6 ms; 15 against 344 ms at 1000), so the exact one is kept only
// where it costs under a millisecond and leaves no tolerance to choose.
constexpr std::size_t kDirectSolveLimit = 100;
// A forced direct solve holds the dense n x n Hessian: refused above this (128 MB).
constexpr std::size_t kDirectSolveMax = 4000;
// Conjugate-gradient iterations per Newton step; an unfinished solve is still a descent step.
constexpr int kMaxLinearIterations = 1000;
// Forcing terms: the first, and the cap of every later one. The raw estimate starts close to
// the answer, where Newton's method is fast: on a 24.5k-patch furnace 0.1 / 0.1 took 4 Newton
// steps and 48 conjugate-gradient iterations, the looser 0.5 / 0.9 5 steps and 46.
constexpr double kForcingFirst = 0.1;
constexpr double kForcingMax = 0.1;
// A conjugate-gradient solve also stops once its largest scaled residual is this fraction of
// the tolerance: the linear model's row errors are then inside it with room for the rest of
// the step's error (quadratic in the step, negligible when the step is this small).
constexpr double kLinearEnough = 0.5;

struct RowErrors {
  double max = 0;   // max_i |g_i| / A_i
  double norm = 0;  // |g / A|_2
};

RowErrors row_errors(const Problem& p, const VectorXd& R, VectorXd* g) {
  *g = p.area - R;
  RowErrors e;
  if (p.n == 0) return e;
  const VectorXd scaled = g->cwiseQuotient(p.area);
  e.max = scaled.cwiseAbs().maxCoeff();
  e.norm = scaled.norm();
  return e;
}

// Dense LDL^T of the Hessian scaled to a unit diagonal (D H D, D = diag(H_ii^-1/2)).
bool solve_directly(const Problem& p, const VectorXd& H_diag, const VectorXd& g, VectorXd* delta,
                    std::string* why) {
  const VectorXd scale = H_diag.cwiseSqrt().cwiseInverse();
  const Eigen::MatrixXd H =
      scale.asDiagonal() * smoothing_detail::dense_hessian(p, H_diag) * scale.asDiagonal();
  const Eigen::LDLT<Eigen::MatrixXd> ldlt(H);
  if (ldlt.info() != Eigen::Success) {
    *why = "the Newton system could not be factorised";
    return false;
  }
  *delta = scale.cwiseProduct(ldlt.solve(-scale.cwiseProduct(g)));
  return true;
}

// Jacobi-preconditioned conjugate gradients on H delta = -g from delta = 0 (e.g. Saad,
// "Iterative Methods for Sparse Linear Systems", 2nd ed., ch. 9), stopped when the
// residual's 2-norm, scaled by the areas like g, is at most eta |g / A|, or when its largest
// scaled entry is at most `enough`: the residual is the linear model's next g, and the Newton
// loop stops on the largest row error, so a step that brings that well below the tolerance
// needs no more accuracy (in the last step the 2-norm, summed over all rows, still asks for
// a few more iterations). Every iterate minimises the quadratic model q(d) = g.d + d.H.d / 2
// over a subspace containing 0, so g.d <= -d.H.d / 2 < 0: even an unfinished solve is a
// descent direction. Returns the iterations; *reached is the relative residual attained.
int conjugate_gradients(Problem& p, const VectorXd& H_diag, const VectorXd& g, double eta,
                        double enough, VectorXd* delta, double* reached) {
  const VectorXd inv_area = p.area.cwiseInverse();
  const double g_norm = g.cwiseProduct(inv_area).norm();
  VectorXd r = -g;
  VectorXd z = r.cwiseQuotient(H_diag);
  VectorXd d = z, q;
  delta->setZero(g.size());
  double rz = r.dot(z);
  *reached = 1;
  int iterations = 0;
  while (iterations < kMaxLinearIterations) {
    smoothing_detail::hessian_times(p, d, &q);
    const double curvature = d.dot(q);
    if (!(curvature > 0)) break;  // only at round-off level, H being positive definite
    const double step = rz / curvature;
    *delta += step * d;
    r -= step * q;
    ++iterations;
    *reached = r.cwiseProduct(inv_area).norm() / g_norm;
    if (*reached <= eta || r.cwiseProduct(inv_area).lpNorm<Eigen::Infinity>() <= enough) break;
    z = r.cwiseQuotient(H_diag);
    const double rz_next = r.dot(z);
    d = z + (rz_next / rz) * d;
    rz = rz_next;
  }
  return iterations;
}

// Checks the input; returns whether the Newton steps are solved directly (dense) or by
// conjugate gradients.
bool check_and_choose_solver(const PatchSet& patches, const Tallies& tallies,
                             const SmoothingOptions& options) {
  std::string invalid;
  if (!options.IsValid(&invalid)) throw InputError(invalid);
  const std::size_t n = patches.size();
  if (tallies.emitter_begin != 0 || tallies.rows() != n) {
    throw std::invalid_argument("smoothing needs the tallies of all " + std::to_string(n) +
                                " patches, but got rows " + std::to_string(tallies.emitter_begin) +
                                " to " + std::to_string(tallies.emitter_begin + tallies.rows()) +
                                "; merge the shards first");
  }
  tallies_detail::check_tallies(patches, tallies);
  for (std::size_t i = 0; i < n; ++i) {
    const double a = patches.patches[i].area;
    if (!(a > 0) || !std::isfinite(a)) {
      throw InputError("patch " + std::to_string(i) + " '" + patches.patches[i].name +
                       "' has area " + std::to_string(a) + "; smoothing needs a positive area");
    }
  }
  const bool direct =
      options.solver == SmoothingOptions::Solver::direct ||
      (options.solver == SmoothingOptions::Solver::automatic && n <= kDirectSolveLimit);
  if (direct && n > kDirectSolveMax) {
    throw InputError("SmoothingOptions::solver = direct holds a dense matrix of the " +
                     std::to_string(n) + " patches, more than the " +
                     std::to_string(kDirectSolveMax) + " allowed; use automatic or iterative");
  }
  return direct;
}

// Newton's method on the dual: the point mu and what the next step needs there.
struct NewtonState {
  VectorXd mu, R, H_diag, g;
  RowErrors error;
};

// Start from the raw estimate: with symmetric counts mu_i = N_i / A_i is already the answer.
NewtonState raw_start(Problem& p, const Tallies& tallies) {
  NewtonState st;
  st.mu.resize(p.area.size());
  for (Eigen::Index i = 0; i < st.mu.size(); ++i) {
    st.mu[i] = static_cast<double>(tallies.rays[static_cast<std::size_t>(i)]) / p.area[i];
  }
  smoothing_detail::row_sums(p, st.mu, &st.R, &st.H_diag);
  st.error = row_errors(p, st.R, &st.g);
  return st;
}

// Stays inside Phi's domain, then backtracks until the residual falls enough (by the factor
// the attained linear residual `reached` allows). On success moves `st` (all but its error)
// to the new point and returns its errors in `next`.
bool line_search(Problem& p, const VectorXd& delta, double reached, NewtonState* st,
                 VectorXd* trial, VectorXd* trial_g, RowErrors* next) {
  double theta = smoothing_detail::step_to_boundary(p, st->mu, delta);
  const double forcing = std::min(reached, 1.0);
  bool accepted = false;
  for (int halving = 0; halving < 40 && !accepted; ++halving) {
    *trial = st->mu + theta * delta;
    smoothing_detail::row_sums(p, *trial, &st->R, &st->H_diag);
    *next = row_errors(p, st->R, trial_g);
    accepted = next->norm <= (1 - 1e-4 * theta * (1 - forcing)) * st->error.norm;
    if (!accepted) theta *= 0.5;
  }
  if (!accepted) return false;
  st->mu.swap(*trial);
  st->g.swap(*trial_g);
  return true;
}

// Eisenstat-Walker choice 2 (gamma 0.9, alpha 2), safeguarded: the forcing term of the next
// conjugate-gradient solve after the residual went from `before` to `after`.
double next_forcing(double eta, const RowErrors& before, const RowErrors& after, double tolerance) {
  const double ratio = after.norm / before.norm;
  const double kept = 0.9 * eta * eta;
  double forcing_next = 0.9 * ratio * ratio;
  if (kept > 0.1) forcing_next = std::max(forcing_next, kept);
  forcing_next = std::max(forcing_next, 0.5 * tolerance / after.norm);
  return std::min(forcing_next, kForcingMax);
}

// Newton steps until the row error is below the tolerance. Returns why it stopped early
// (empty when it did not).
std::string newton(Problem& p, const SmoothingOptions& options, bool direct, NewtonState* st,
                   SmoothingSummary* s) {
  VectorXd trial, trial_g, delta;
  int slow_steps = 0;
  double eta = direct ? 0.0 : kForcingFirst;
  std::string failure;
  while (st->error.max >= options.tolerance && s->iterations < options.max_iterations) {
    double reached = 0;  // relative residual of the Newton system actually attained
    if (direct) {
      if (!solve_directly(p, st->H_diag, st->g, &delta, &failure)) return failure;
    } else {
      s->linear_iterations += conjugate_gradients(
          p, st->H_diag, st->g, eta, kLinearEnough * options.tolerance, &delta, &reached);
    }
    if (!delta.allFinite())
      return "the Newton step is not finite (the rays give no unique smoothed matrix)";
    if (!(st->g.dot(delta) < 0))  // directional derivative of Phi
      return "the Newton step is not a descent direction";
    RowErrors next;
    if (!line_search(p, delta, reached, st, &trial, &trial_g, &next)) {
      return st->error.max < 1e-9 ? "progress stalled at round-off level"
                                  : "the line search found no decrease";
    }
    ++s->iterations;
    if (!direct) eta = next_forcing(eta, st->error, next, options.tolerance);
    // Near round-off the error can stop falling; do not spin to max_iterations there.
    slow_steps = (next.max > 0.5 * st->error.max && next.max < 1e-9) ? slow_steps + 1 : 0;
    st->error = next;
    if (slow_steps >= 3) return "progress stalled at round-off level";
  }
  return failure;
}

// The summary's message: how it ended, by which method, and the measures of the result.
std::string message(const SmoothingSummary& s, const SmoothingOptions& options, bool direct,
                    std::string failure, double final_error) {
  const std::string method =
      direct ? "dense LDL^T"
             : std::to_string(s.linear_iterations) + " conjugate-gradient iterations";
  const std::string figures = "max row error " + rounded("%.3g", s.max_row_error) +
                              ", max reciprocity error " +
                              rounded("%.3g", s.max_reciprocity_error) + ", largest correction " +
                              rounded("%.3g", s.max_correction_sigma) + " standard errors";
  if (s.converged) {
    return "converged in " + std::to_string(s.iterations) + " Newton iterations (" + method +
           "); " + figures;
  }
  if (failure.empty()) {
    failure = "no convergence in " + std::to_string(options.max_iterations) + " iterations";
  }
  return "smoothing did not converge (" + failure + ", row error " + rounded("%.3g", final_error) +
         " above tolerance " + rounded("%.3g", options.tolerance) + "; " + method + "); " + figures;
}

}  // namespace

ViewFactors smooth_view_factors(const PatchSet& patches, const Tallies& tallies,
                                const SmoothingOptions& options, SmoothingSummary* summary) {
  const bool direct = check_and_choose_solver(patches, tallies, options);
  Problem p = smoothing_detail::make_problem(patches, tallies);
  SmoothingSummary local;
  SmoothingSummary& s = summary != nullptr ? *summary : local;
  s = SmoothingSummary{};
  NewtonState st = raw_start(p, tallies);
  const std::string failure = newton(p, options, direct, &st, &s);

  ViewFactors vf;
  vf.names.reserve(patches.size());
  vf.areas.reserve(patches.size());
  for (const Patch& patch : patches.patches) {
    vf.names.push_back(patch.name);
    vf.areas.push_back(patch.area);
  }
  vf.rays = tallies.rays;
  vf.smoothed = true;
  const smoothing_detail::Measures m = smoothing_detail::finish(p, st.mu, tallies, &vf);
  vf.max_correction_sigma = m.max_correction_sigma;
  s.max_row_error = m.max_row_error;
  s.max_reciprocity_error = m.max_reciprocity_error;
  s.max_correction_sigma = m.max_correction_sigma;
  s.converged = failure.empty() && st.error.max < options.tolerance;
  s.message = message(s, options, direct, failure, st.error.max);
  return vf;
}

}  // namespace hearthray
