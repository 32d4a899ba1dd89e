// Input checks of the exchange solver: every refusal names the face or node and says what to
// change, before any solving starts.
#include <tbb/blocked_range.h>
#include <tbb/parallel_reduce.h>

#include <algorithm>
#include <cmath>
#include <cstdint>
#include <cstdio>
#include <cstring>
#include <numeric>

#include "exchange/exchange_setup.hpp"
#include "hearthray/error.hpp"
#include "hearthray/units.hpp"

namespace hearthray {
namespace exchange_detail {

namespace {

std::string quoted(const std::string& name) {
  return "'" + name + "'";
}

std::string face_label(const ExchangeProblem& problem, std::size_t i) {
  const ViewFactors& vf = *problem.view_factors;
  std::string label =
      i < vf.names.size() ? "face " + quoted(vf.names[i]) : "face " + std::to_string(i);
  const std::uint32_t node = problem.faces[i].node;
  if (node < problem.nodes.size()) label += " (surface " + quoted(problem.nodes[node].name) + ")";
  return label;
}

void require_kelvin(double kelvin, const std::string& what) {
  if (!(std::isfinite(kelvin) && kelvin > 0)) {
    throw InputError(what + " is " + rounded("%.6g", kelvin) +
                     " K; an absolute temperature must be above 0 K (write e.g. \"20 C\" or "
                     "\"293.15 K\")");
  }
}

void require_size(std::size_t size, std::size_t faces, const std::string& what, bool may_be_empty) {
  if (size == faces || (may_be_empty && size == 0)) return;
  throw InputError("the view factors have " + std::to_string(size) + " " + what + " but the " +
                   "problem has " + std::to_string(faces) +
                   " faces: give one face per view-factor patch, in the same order");
}

// Union-find over nodes: nodes whose faces see each other exchange heat and share a level. A
// group is anchored when one of its nodes is (see check_temperature_level).
struct Groups {
  std::vector<std::uint32_t> parent;
  std::vector<char> anchored;  // per root
  std::size_t count;           // groups left
  std::size_t unanchored;      // groups left without an anchor
  explicit Groups(const std::vector<char>& anchors)
      : parent(anchors.size()), anchored(anchors), count(anchors.size()) {
    std::iota(parent.begin(), parent.end(), 0u);
    unanchored = std::size_t(std::count(anchors.begin(), anchors.end(), char(0)));
  }
  std::uint32_t find(std::uint32_t a) {
    while (parent[a] != a) a = parent[a] = parent[parent[a]];
    return a;
  }
  // Puts root `from` under root `to` (two different roots).
  void merge(std::uint32_t from, std::uint32_t to) {
    parent[from] = to;
    --count;
    // Two groups without an anchor become one, or one joins an anchored group: one fewer
    // unanchored group either way.
    if (!anchored[from] || !anchored[to]) --unanchored;
    anchored[to] = anchored[from] || anchored[to];
  }
};

// A temperature level comes from a fixed temperature, convection, a wall loss or a view to
// the surroundings. A group of nodes with none of these has a heat balance that holds at any
// level (or at none): refuse it rather than hand a singular system to the solver.
void check_temperature_level(const ExchangeProblem& problem, const Setup& s) {
  std::vector<char> anchors(s.nodes, 0);
  for (std::size_t k = 0; k < s.nodes; ++k) {
    if (s.fixed[k] || s.hA[k] > 0 || s.UA[k] > 0) anchors[k] = 1;
  }
  for (std::size_t i = 0; i < s.faces; ++i) {
    if (s.to_surroundings[i] > 0) anchors[s.node_of_face[i]] = 1;
  }
  Groups groups(anchors);
  const SparseMatrix& F = *s.F;
  // Row i joins its node's group with those of the faces it sees: the row's root stays the
  // root (the others go under it), so it is found once a row, and a run of columns on one
  // node is looked up once. Once every group has an anchor the rest of F cannot leave one
  // without, and once every node is in one group it can join nothing (an enclosure is usually
  // joined within its first rows): either way the answer is what the whole pass would give.
  auto join_row = [&](int i, bool until_anchored) {
    const std::uint32_t root = groups.find(s.node_of_face[std::size_t(i)]);
    std::uint32_t last = root;  // the node of the previous column (already in root's group)
    for (SparseMatrix::InnerIterator it(F, i); it; ++it) {
      const std::uint32_t node = s.node_of_face[std::size_t(it.col())];
      if (node == last || !(it.value() > 0)) continue;
      last = node;
      const std::uint32_t other = groups.find(node);
      if (other != root) groups.merge(other, root);
      if (until_anchored && groups.anchored[root]) return;
    }
  };
  auto settled = [&groups] { return groups.count <= 1 || groups.unanchored == 0; };
  // The groups do not depend on which rows are joined first, so first, for each face whose
  // group has no anchor yet, its row until the group has one (usually its first entry on an
  // anchored node). A group still without an anchor after that has had all its faces' rows
  // joined whole (an anchor, once found, is never lost); only rows of other faces seeing it
  // could still anchor it: then every row, as before. On the 98,592-patch furnace (billets
  // and burner tiles without an anchor) the check read 15,604 rows whole in face order before
  // every group had an anchor, 0.19 s on one thread while the other waited; now the first
  // entries of 49,440 rows, 0.004 s.
  for (int i = 0; i < F.outerSize() && !settled(); ++i) {
    if (!groups.anchored[groups.find(s.node_of_face[std::size_t(i)])]) join_row(i, true);
  }
  for (int i = 0; i < F.outerSize() && !settled(); ++i) join_row(i, false);
  const std::vector<char>& anchored = groups.anchored;
  auto advice = [](const std::string& whom) {
    return "give " + whom +
           " a temperature, or add convection to a fluid, a wall loss to an "
           "outside temperature, or an opening to surroundings with a [surroundings] temperature";
  };
  // The group without an anchor that holds the lowest-numbered node is reported.
  for (std::uint32_t first = 0; first < s.nodes; ++first) {
    const std::uint32_t root = groups.find(first);
    if (anchored[root]) continue;
    std::vector<std::string> names;
    for (std::uint32_t k = 0; k < s.nodes; ++k) {
      if (groups.find(k) == root) names.push_back(quoted(problem.nodes[k].name));
    }
    if (names.size() == s.nodes) {
      throw InputError(
          "nothing fixes the temperature level: no surface has a given temperature, none has "
          "convection or a wall loss, and no face sees the surroundings, so heat inputs alone "
          "cannot say how hot the enclosure is; " +
          advice("at least one surface"));
    }
    throw InputError("surfaces " + join_at_most(names, 5) +
                     " exchange radiation only among themselves and nothing fixes their "
                     "temperature level; " +
                     advice("at least one of them"));
  }
}

void check_surroundings(const ExchangeProblem& problem, const Setup& s) {
  if (problem.surroundings_K) return;
  const ViewFactors& vf = *problem.view_factors;
  std::size_t worst = s.faces, count = 0;
  for (std::size_t i = 0; i < s.faces; ++i) {
    if (s.to_surroundings[i] > 0) {
      ++count;
      if (worst == s.faces || s.to_surroundings[i] > s.to_surroundings[worst]) worst = i;
    }
  }
  if (count == 0) return;
  const double escaped = vf.to_surroundings.empty() ? 0 : vf.to_surroundings[worst];
  const double back = vf.to_back_faces.empty() ? 0 : vf.to_back_faces[worst];
  std::string what;
  if (escaped > 0) what = rounded("%.6g", 100 * escaped) + " % escapes the scene";
  if (back > 0) {
    what += (what.empty() ? "" : " and ") + rounded("%.6g", 100 * back) +
            " % lands on back faces of one-sided surfaces (treated as surroundings; many such "
            "hits mean flipped normals)";
  }
  throw InputError(std::to_string(count) +
                   " face(s) see the surroundings but no surroundings "
                   "temperature is given: of the radiation leaving " +
                   face_label(problem, worst) + ", " + what +
                   "; add a [surroundings] temperature, or close the geometry");
}

// Every entry of F finite and not negative. Rows checked in parallel (F holds up to some 1e8
// entries); the first bad row is reported.
void check_factor_entries(const ExchangeProblem& problem) {
  const ViewFactors& vf = *problem.view_factors;
  // On the bits, in 32-bit halves, without early exits, so that the loop is vectorised: an
  // entry is finite and not negative when its high half is below 0x7ff00000 (sign clear,
  // exponent not all ones), or when it is -0.0. The bad entry itself is found below.
  const double* values = vf.F.valuePtr();
  const SparseMatrix::StorageIndex* outer = vf.F.outerIndexPtr();
  const SparseMatrix::StorageIndex* nonzeros = vf.F.innerNonZeroPtr();  // null when compressed
  auto row_ok = [values, outer, nonzeros](int i) {
    const std::size_t first = std::size_t(outer[i]);
    const std::size_t last =
        nonzeros ? first + std::size_t(nonzeros[i]) : std::size_t(outer[i + 1]);
    std::uint32_t bad = 0;
    for (std::size_t k = first; k < last; ++k) {
      std::uint64_t bits;
      std::memcpy(&bits, values + k, sizeof bits);
      const auto high = std::uint32_t(bits >> 32), low = std::uint32_t(bits);
      const std::uint32_t minus_zero = std::uint32_t(high == 0x80000000u) & std::uint32_t(low == 0);
      bad |= std::uint32_t(high >= 0x7ff00000u) & ~minus_zero;
    }
    return bad == 0;
  };
  const int rows = static_cast<int>(vf.F.outerSize());
  const int first_bad = tbb::parallel_reduce(
      tbb::blocked_range<int>(0, rows, 256), rows,
      [&](const tbb::blocked_range<int>& range, int found) {
        for (int i = range.begin(); i != range.end() && i < found; ++i) {
          if (!row_ok(i)) return i;
        }
        return found;
      },
      [](int a, int b) { return std::min(a, b); });
  if (first_bad < rows) {
    for (SparseMatrix::InnerIterator it(vf.F, first_bad); it; ++it) {
      if (!(std::isfinite(it.value()) && it.value() >= 0)) {
        throw InputError("the view factor from " + face_label(problem, first_bad) + " to " +
                         face_label(problem, it.col()) + " is " + rounded("%.6g", it.value()) +
                         "; view factors must be finite and not negative");
      }
    }
  }
}

// The faces: node, emissivity, area and fractions lost, each checked; and the view factors.
void set_up_faces(const ExchangeProblem& problem, Setup* s) {
  const ViewFactors& vf = *problem.view_factors;
  s->eps.resize(s->faces);
  s->area.resize(s->faces);
  s->to_surroundings.resize(s->faces);
  s->node_of_face.resize(s->faces);
  s->node_area = Eigen::VectorXd::Zero(s->nodes);
  for (std::size_t i = 0; i < s->faces; ++i) {
    const ExchangeFace& face = problem.faces[i];
    if (face.node >= s->nodes) {
      throw InputError(face_label(problem, i) + " belongs to node " + std::to_string(face.node) +
                       " but there are only " + std::to_string(s->nodes) + " nodes");
    }
    if (!(face.emissivity > 0 && face.emissivity <= 1)) {
      throw InputError(face_label(problem, i) + " has emissivity " +
                       rounded("%.6g", face.emissivity) +
                       "; a gray surface needs an emissivity above 0 and at most 1");
    }
    if (!(std::isfinite(vf.areas[i]) && vf.areas[i] > 0)) {
      throw InputError(face_label(problem, i) + " has area " + rounded("%.6g", vf.areas[i]) +
                       " m^2; every face needs a positive area");
    }
    const double escaped = vf.to_surroundings.empty() ? 0 : vf.to_surroundings[i];
    const double back = vf.to_back_faces.empty() ? 0 : vf.to_back_faces[i];
    if (!(escaped >= 0 && back >= 0 && std::isfinite(escaped + back))) {
      throw InputError(face_label(problem, i) +
                       " has a negative or invalid fraction to the "
                       "surroundings or to back faces");
    }
    s->eps[i] = face.emissivity;
    s->area[i] = vf.areas[i];
    s->to_surroundings[i] = escaped + back;
    s->node_of_face[i] = face.node;
    s->node_area[face.node] += vf.areas[i];
  }
  if (!problem.face_centres.empty()) {
    if (problem.face_centres.size() != s->faces) {
      throw InputError("the exchange problem has " + std::to_string(problem.face_centres.size()) +
                       " face centres for " + std::to_string(s->faces) + " faces");
    }
    for (std::size_t i = 0; i < s->faces; ++i) {
      const Vec3& c = problem.face_centres[i];
      if (!std::isfinite(c.x + c.y + c.z)) {
        throw InputError(face_label(problem, i) + " has a centre that is not finite");
      }
    }
    s->centres = &problem.face_centres;
  }
  check_factor_entries(problem);
}

// Node k's condition (given temperature, heat flux, power or none) and its convection and
// wall loss, each checked.
void set_up_node(const ExchangeProblem& problem, std::size_t k, Setup* s) {
  const ExchangeNode& node = problem.nodes[k];
  const std::string label = "surface " + quoted(node.name);
  if (s->node_area[k] == 0) {
    throw InputError(label + " has no face: every node needs at least one face to radiate");
  }
  const NodeCondition& c = node.condition;
  if (!std::isfinite(c.value)) {
    throw InputError(label + " has a condition value that is not a finite number");
  }
  switch (c.kind) {
    case ConditionKind::temperature:
      require_kelvin(c.value, "the temperature of " + label);
      s->fixed[k] = true;
      s->fixed_K[k] = c.value;
      break;
    case ConditionKind::heat_flux:
      s->input_W[k] = c.value * s->node_area[k];
      break;
    case ConditionKind::power:
      s->input_W[k] = c.value;
      break;
    case ConditionKind::adiabatic:
      s->input_W[k] = 0;
      break;
  }
  if (c.convection) {
    if (!(std::isfinite(c.convection->h) && c.convection->h >= 0)) {
      throw InputError(label + " has a convection coefficient h = " +
                       rounded("%.6g", c.convection->h) + " W/(m^2 K); it must be 0 or more");
    }
    require_kelvin(c.convection->fluid_K, "the fluid temperature of " + label);
    s->hA[k] = c.convection->h * s->node_area[k];
    s->fluid_K[k] = c.convection->fluid_K;
  }
  if (c.wall_loss) {
    if (!(std::isfinite(c.wall_loss->U) && c.wall_loss->U >= 0)) {
      throw InputError(label + " has a wall coefficient U = " + rounded("%.6g", c.wall_loss->U) +
                       " W/(m^2 K); it must be 0 or more");
    }
    require_kelvin(c.wall_loss->outside_K, "the outside temperature of " + label);
    s->UA[k] = c.wall_loss->U * s->node_area[k];
    s->outside_K[k] = c.wall_loss->outside_K;
  }
}

}  // namespace

Setup check_and_set_up(const ExchangeProblem& problem) {
  if (problem.view_factors == nullptr) {
    throw InputError("the exchange problem has no view factors: compute or load them first");
  }
  const ViewFactors& vf = *problem.view_factors;
  Setup s;
  s.faces = problem.faces.size();
  s.nodes = problem.nodes.size();
  if (s.faces == 0) throw InputError("the exchange problem has no faces: nothing radiates");
  s.F = &vf.F;
  s.reciprocal = vf.smoothed;
  if (static_cast<std::size_t>(vf.F.rows()) != s.faces ||
      static_cast<std::size_t>(vf.F.cols()) != s.faces) {
    throw InputError("the view-factor matrix is " + std::to_string(vf.F.rows()) + " x " +
                     std::to_string(vf.F.cols()) + " but the problem has " +
                     std::to_string(s.faces) +
                     " faces: give one face per view-factor patch, in the same order");
  }
  require_size(vf.areas.size(), s.faces, "areas", false);
  require_size(vf.names.size(), s.faces, "patch names", true);
  require_size(vf.to_surroundings.size(), s.faces, "escaped fractions", true);
  require_size(vf.to_back_faces.size(), s.faces, "back-face fractions", true);
  set_up_faces(problem, &s);

  s.hA = s.fluid_K = s.UA = s.outside_K = s.input_W = s.fixed_K = Eigen::VectorXd::Zero(s.nodes);
  s.fixed.assign(s.nodes, false);
  for (const ExchangeNode& node : problem.nodes) s.node_names.push_back(node.name);
  for (std::size_t k = 0; k < s.nodes; ++k) set_up_node(problem, k, &s);
  if (problem.surroundings_K) {
    require_kelvin(*problem.surroundings_K, "the surroundings temperature");
    s.surroundings_Eb = kStefanBoltzmann * std::pow(*problem.surroundings_K, 4);
  }
  check_surroundings(problem, s);
  check_temperature_level(problem, s);
  return s;
}

}  // namespace exchange_detail
}  // namespace hearthray
