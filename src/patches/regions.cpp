// Region growing for charts of irregular shape (see regions.hpp).
#include "patches/regions.hpp"

#include <algorithm>
#include <cmath>
#include <map>
#include <queue>
#include <tuple>

namespace hearthray::patch_layout {

namespace {

constexpr int kMaxRounds = 16;
// Farthest-point sampling up to this many distance evaluations (regions x triangles).
constexpr double kMaxSeedWork = 2e7;
constexpr std::uint32_t kNone = 0xffffffffu;

struct Graph {
  std::vector<Vec3> centroid;
  std::vector<double> area;
  std::vector<std::vector<std::uint32_t>> neighbours;  // local indices, increasing
};

Graph chart_graph(const Scene& scene, const Chart& chart, const std::vector<std::uint32_t>& weld) {
  const std::size_t n = chart.triangles.size();
  Graph g;
  g.centroid.resize(n);
  g.area.resize(n);
  g.neighbours.resize(n);
  for (std::uint32_t i = 0; i < n; ++i) {
    const std::uint32_t t = chart.triangles[i];
    const Triangle& tri = scene.triangles[t];
    g.centroid[i] =
        (scene.vertices[tri.v[0]] + scene.vertices[tri.v[1]] + scene.vertices[tri.v[2]]) / 3.0;
    g.area[i] = scene.triangle_area(t);
  }
  // Triangles sharing an edge are neighbours.
  const auto edges = sorted_edges(scene, chart.triangles, weld);
  for_each_edge(edges, [&](std::size_t first, std::size_t last) {
    for (std::size_t a = first; a < last; ++a)
      for (std::size_t b = first; b < last; ++b) {
        const std::uint32_t i = edges[a].second / 3, j = edges[b].second / 3;
        if (j != i) g.neighbours[i].push_back(j);
      }
  });
  for (std::vector<std::uint32_t>& list : g.neighbours) {
    std::sort(list.begin(), list.end());
    list.erase(std::unique(list.begin(), list.end()), list.end());
  }
  return g;
}

// Farthest-point sampling: the triangle farthest from the chart's centroid, then each time the
// one farthest from all seeds so far.
std::vector<std::uint32_t> first_seeds(const Graph& g, const Vec3& centre, int count) {
  const std::size_t n = g.centroid.size();
  std::vector<double> nearest(n);
  for (std::size_t i = 0; i < n; ++i) nearest[i] = norm(g.centroid[i] - centre);
  std::vector<std::uint32_t> seeds;
  while (static_cast<int>(seeds.size()) < count) {
    std::uint32_t best = 0;
    for (std::uint32_t i = 1; i < n; ++i)
      if (nearest[i] > nearest[best]) best = i;
    seeds.push_back(best);
    for (std::size_t i = 0; i < n; ++i)
      nearest[i] = std::min(seeds.size() == 1 ? INFINITY : nearest[i],
                            norm(g.centroid[i] - g.centroid[best]));
  }
  return seeds;
}

// For large charts, where farthest-point sampling (count x triangles distances) would be slow:
// one seed per occupied cell of a grid of the regions' size, the triangle nearest the mean
// centroid of the cell's triangles, cells in the order of their first triangle.
std::vector<std::uint32_t> grid_seeds(const Graph& g, double cell) {
  std::map<std::tuple<long long, long long, long long>, std::size_t> index;
  std::vector<Vec3> sum;
  std::vector<double> count;
  std::vector<std::size_t> cell_of(g.centroid.size());
  for (std::size_t i = 0; i < g.centroid.size(); ++i) {
    const Vec3 c = g.centroid[i] / cell;
    const auto key = std::make_tuple(static_cast<long long>(std::floor(c.x)),
                                     static_cast<long long>(std::floor(c.y)),
                                     static_cast<long long>(std::floor(c.z)));
    const auto [it, inserted] = index.emplace(key, sum.size());
    if (inserted) sum.emplace_back(), count.push_back(0);
    cell_of[i] = it->second;
    sum[it->second] += g.centroid[i];
    count[it->second] += 1;
  }
  std::vector<std::uint32_t> seeds(sum.size(), 0);
  std::vector<double> best(sum.size(), INFINITY);
  for (std::uint32_t i = 0; i < g.centroid.size(); ++i) {
    const std::size_t k = cell_of[i];
    const double d = norm(g.centroid[i] - sum[k] / count[k]);
    if (d < best[k]) best[k] = d, seeds[k] = i;
  }
  return seeds;
}

// Every triangle to the seed nearest along the graph (ties: lower seed, then lower triangle).
std::vector<std::uint32_t> grow(const Graph& g, const std::vector<std::uint32_t>& seeds) {
  const std::size_t n = g.centroid.size();
  std::vector<std::uint32_t> region(n, kNone);
  std::vector<double> dist(n, INFINITY);
  using Item = std::tuple<double, std::uint32_t, std::uint32_t>;  // distance, region, triangle
  std::priority_queue<Item, std::vector<Item>, std::greater<Item>> queue;
  for (std::uint32_t r = 0; r < seeds.size(); ++r) queue.emplace(0.0, r, seeds[r]);
  while (!queue.empty()) {
    const auto [d, r, i] = queue.top();
    queue.pop();
    if (region[i] != kNone) continue;
    region[i] = r;
    dist[i] = d;
    for (std::uint32_t j : g.neighbours[i])
      if (region[j] == kNone) queue.emplace(d + norm(g.centroid[j] - g.centroid[i]), r, j);
  }
  for (std::size_t i = 0; i < n; ++i) {  // not reached over edges: the nearest seed in space
    if (region[i] != kNone) continue;
    double best = INFINITY;
    for (std::uint32_t r = 0; r < seeds.size(); ++r) {
      const double d = norm(g.centroid[i] - g.centroid[seeds[r]]);
      if (d < best) best = d, region[i] = r;
    }
  }
  return region;
}

// Each seed moved to the triangle of its region nearest the region's area centroid.
std::vector<std::uint32_t> centred_seeds(const Graph& g, const std::vector<std::uint32_t>& region,
                                         const std::vector<std::uint32_t>& seeds) {
  std::vector<Vec3> moment(seeds.size());
  std::vector<double> area(seeds.size(), 0);
  for (std::size_t i = 0; i < region.size(); ++i) {
    moment[region[i]] += g.centroid[i] * g.area[i];
    area[region[i]] += g.area[i];
  }
  std::vector<std::uint32_t> out = seeds;
  std::vector<double> best(seeds.size(), INFINITY);
  for (std::uint32_t i = 0; i < region.size(); ++i) {
    const std::uint32_t r = region[i];
    if (!(area[r] > 0)) continue;
    const double d = norm(g.centroid[i] - moment[r] / area[r]);
    if (d < best[r]) best[r] = d, out[r] = i;
  }
  return out;
}

}  // namespace

std::vector<std::uint32_t> grow_regions(const Scene& scene, const Chart& chart,
                                        const std::vector<std::uint32_t>& weld) {
  const Graph g = chart_graph(scene, chart, weld);
  const double work = double(chart.regions) * double(g.centroid.size());
  std::vector<std::uint32_t> seeds = work <= kMaxSeedWork
                                         ? first_seeds(g, chart.centroid, chart.regions)
                                         : grid_seeds(g, std::sqrt(chart.area / chart.regions));
  std::vector<std::uint32_t> region = grow(g, seeds);
  for (int round = 0; round < kMaxRounds; ++round) {
    const std::vector<std::uint32_t> next = centred_seeds(g, region, seeds);
    if (next == seeds) break;
    seeds = next;
    region = grow(g, seeds);
  }
  return region;
}

}  // namespace hearthray::patch_layout
