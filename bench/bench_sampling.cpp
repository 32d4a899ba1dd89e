// Benchmark (not a test): error of the view factors against rays and against seconds, for the
// two emission samplers (view_factors.hpp): stratified Monte Carlo (the default before the
// sobol sampler) and Owen-scrambled Sobol' points, both followed by the default smoothing, as
// `hearthray factors` runs them.
//
// RMS error over 16 seeds and over every factor between two different patches, against
// closed forms (tests/support/closed_forms.hpp):
//  - unit cube (6 faces): Howell's catalogue C-11 (opposite faces, 0.19982) and C-14
//    (adjacent faces, 0.20004);
//  - baffled plates (obstructed): 1 x 1 plates 1 apart, directly opposed, with a two-sided
//    0.6 x 0.6 baffle half-way that hides part of each plate from the other: plate -> plate
//    from B-3 element factors integrated over the unhidden part (baffled_plates_factor),
//    plate -> baffle by Siegel & Howell's parallel rectangles in general position, the
//    baffle's rows by reciprocity; the other entries are zero.
// Prints a table and draws two line charts (rays per patch, and CPU seconds per run, against
// the RMS error; log-log). CPU seconds (process time of all threads), not wall-clock: on a
// machine shared with other work they are the run's own cost. The two samplers' runs are
// interleaved seed by seed.
//
// Usage: hearthray_bench_sampling [folder for the PNGs, default docs] [threads] [seeds]
#include <time.h>

#include <cmath>
#include <cstdio>
#include <cstdlib>
#include <string>
#include <thread>
#include <vector>

#include "hearthray/picture.hpp"
#include "hearthray/pipeline.hpp"
#include "pictures/line_chart.hpp"
#include "support/closed_forms.hpp"
#include "support/meshes.hpp"

using namespace hearthray;
using namespace hearthray::testing;

namespace {

const std::vector<std::uint64_t> kRays = {1000, 4000, 16000, 100000, 400000};

struct Curve {
  std::string scene, sampler;
  std::vector<double> rays, seconds, rms;
};

using Matrix = std::vector<std::vector<double>>;

Matrix dense(const ViewFactors& vf) {
  Matrix m(vf.size(), std::vector<double>(vf.size(), 0.0));
  for (std::size_t i = 0; i < vf.size(); ++i)
    for (SparseMatrix::InnerIterator it(vf.F, Eigen::Index(i)); it; ++it)
      m[i][std::size_t(it.col())] = it.value();
  return m;
}

// CPU seconds of the whole process (all threads): on a machine shared with other work, the
// cost of a run; wall-clock time there mostly measures the other work.
double cpu_seconds() {
  timespec t{};
  clock_gettime(CLOCK_PROCESS_CPUTIME_ID, &t);
  return double(t.tv_sec) + 1e-9 * double(t.tv_nsec);
}

FactorRun run(const Scene& scene, std::uint64_t rays, std::uint64_t seed, EmissionSampler s,
              int threads, double* seconds) {
  PipelineOptions options;
  options.rays_per_patch = rays;
  options.seed = seed;
  options.sampler = s;
  options.threads = threads;
  const double t0 = cpu_seconds();
  FactorRun r = run_view_factors(scene, options);
  *seconds = cpu_seconds() - t0;
  return r;
}

// Squared error summed over the factors between two different patches, and their count.
void add_errors(const Matrix& f, const Matrix& reference, double* sum, std::size_t* count) {
  for (std::size_t i = 0; i < f.size(); ++i)
    for (std::size_t j = 0; j < f.size(); ++j)
      if (i != j) {
        *sum += (f[i][j] - reference[i][j]) * (f[i][j] - reference[i][j]);
        ++*count;
      }
}

// Both samplers' curves on one scene, the runs of the two interleaved (seed by seed) so that a
// change of the machine's load falls on both alike.
std::vector<Curve> measure(const std::string& name, const Scene& scene, const Matrix& reference,
                           int threads, int seeds) {
  const EmissionSampler samplers[2] = {EmissionSampler::stratified, EmissionSampler::sobol};
  std::vector<Curve> c(2);
  for (int s = 0; s < 2; ++s) c[s] = Curve{name, sampler_name(samplers[s]), {}, {}, {}};
  for (std::uint64_t n : kRays) {
    double sum[2] = {0, 0}, time[2] = {0, 0};
    std::size_t count[2] = {0, 0};
    for (int k = 0; k < seeds; ++k)
      for (int s = 0; s < 2; ++s) {
        double seconds = 0;
        const Matrix f = dense(run(scene, n, 101 + k, samplers[s], threads, &seconds).factors);
        time[s] += seconds / seeds;
        add_errors(f, reference, &sum[s], &count[s]);
      }
    for (int s = 0; s < 2; ++s) {
      c[s].rays.push_back(double(n));
      c[s].seconds.push_back(time[s]);
      c[s].rms.push_back(std::sqrt(sum[s] / double(count[s])));
    }
  }
  return c;
}

Matrix cube_reference() {
  Matrix m(6, std::vector<double>(6, 0.0));
  for (std::size_t i = 0; i < 6; ++i)
    for (std::size_t j = 0; j < 6; ++j)
      if (i != j)  // unit_cube_obj: faces in opposite pairs (0 1), (2 3), (4 5)
        m[i][j] = (i ^ 1) == j ? parallel_rectangles_aligned(1, 1, 1)
                               : perpendicular_rectangles_common_edge(1, 1, 1);
  return m;
}

// The baffled plates' matrix in the order of `names` (lower, upper, baffle (front), baffle
// (back)): the baffle's front faces the upper plate, its back the lower one.
Matrix baffled_reference(const std::vector<std::string>& names) {
  const double plate_plate = baffled_plates_factor(1, 1, 0.6);
  const double exchange =
      parallel_rectangles_exchange_area({-0.5, 0.5, -0.5, 0.5}, {-0.3, 0.3, -0.3, 0.3}, 0.5);
  auto value = [&](const std::string& a, const std::string& b) {
    if ((a == "lower" && b == "upper") || (a == "upper" && b == "lower")) return plate_plate;
    if ((a == "lower" && b == "baffle (back)") || (a == "upper" && b == "baffle (front)"))
      return exchange / 1.0;
    if ((a == "baffle (back)" && b == "lower") || (a == "baffle (front)" && b == "upper"))
      return exchange / 0.36;
    return 0.0;
  };
  Matrix m(names.size(), std::vector<double>(names.size(), 0.0));
  for (std::size_t i = 0; i < names.size(); ++i)
    for (std::size_t j = 0; j < names.size(); ++j) m[i][j] = value(names[i], names[j]);
  std::printf(
      "baffled plates, closed forms: lower -> upper %.6f, lower -> baffle %.6f, "
      "baffle -> lower %.6f\n",
      plate_plate, exchange, exchange / 0.36);
  return m;
}

void chart(const std::string& path, const std::vector<Curve>& curves, bool by_time, int seeds,
           int threads) {
  pictures::LineChart c;
  c.title = by_time ? "View-factor error against time" : "View-factor error against rays";
  c.subtitle = "RMS error against closed forms over " + std::to_string(seeds) +
               " seeds; both samplers followed by the default smoothing";
  c.x_label = by_time ? "CPU seconds per run (tracing and smoothing, summed over " +
                            std::to_string(threads) + " threads)"
                      : "rays per patch";
  c.y_label = "RMS error of the factors";
  c.log_x = c.log_y = true;
  c.width = 960;
  c.height = 600;
  const Colour stratified{0.80, 0.33, 0.10}, sobol{0.10, 0.35, 0.65};
  for (const Curve& cv : curves) {
    pictures::ChartSeries s;
    s.name = cv.scene + ", " + (cv.sampler == "sobol" ? "Sobol'" : "stratified MC");
    s.x = by_time ? cv.seconds : cv.rays;
    s.y = cv.rms;
    s.colour = cv.sampler == "sobol" ? sobol : stratified;
    s.dashed = cv.scene != "unit cube";
    s.markers = true;
    c.series.push_back(s);
  }
  write_picture(path, pictures::draw_line_chart(c));
  std::printf("chart: %s\n", path.c_str());
}

}  // namespace

int main(int argc, char** argv) {
  const std::string folder = argc > 1 ? argv[1] : "docs";
  const int threads =
      argc > 2 ? std::atoi(argv[2]) : int(std::max(1u, std::thread::hardware_concurrency()));
  const int seeds = argc > 3 ? std::atoi(argv[3]) : 16;
  const Scene cube = load_obj_text(unit_cube_obj(1), "cube");
  Scene baffled = load_obj_text(baffled_plates_obj(1, 1, 0.6), "baffled");
  baffled.surfaces[std::size_t(baffled.find_surface("baffle"))].two_sided = true;
  double unused = 0;
  const std::vector<std::string> names =
      run(baffled, 8, 1, EmissionSampler::sobol, threads, &unused).factors.names;

  const Matrix cube_ref = cube_reference(), baffled_ref = baffled_reference(names);
  const std::vector<Curve> c = measure("unit cube", cube, cube_ref, threads, seeds);
  const std::vector<Curve> b = measure("baffled plates", baffled, baffled_ref, threads, seeds);
  const std::vector<Curve> curves = {c[0], b[0], c[1], b[1]};  // stratified, then sobol
  std::printf(
      "\nRMS error of the smoothed factors over %d seeds (every factor between two "
      "different patches), and CPU seconds per run\n",
      seeds);
  std::printf("%-15s %8s | %-10s %8s | %-10s %8s | %s\n", "scene", "rays", "stratified", "s/run",
              "sobol", "s/run", "sobol/stratified");
  for (std::size_t c = 0; c < 2; ++c)
    for (std::size_t i = 0; i < kRays.size(); ++i) {
      const Curve& a = curves[c];
      const Curve& b = curves[c + 2];
      std::printf("%-15s %8.0f | %-10.3e %8.4f | %-10.3e %8.4f | %.2f\n", a.scene.c_str(),
                  a.rays[i], a.rms[i], a.seconds[i], b.rms[i], b.seconds[i], b.rms[i] / a.rms[i]);
    }
  chart(folder + "/sampling-error-rays.png", curves, false, seeds, threads);
  chart(folder + "/sampling-error-seconds.png", curves, true, seeds, threads);
  return 0;
}
