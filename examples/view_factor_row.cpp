// View factors of an OBJ mesh with the hearthray library: the matrix, its standard errors, and
// one row printed. A starting point for a program that feeds its own solver.
//
//   view_factor_row mesh.obj [surface] [rays per surface]
//
// Surfaces are the OBJ groups, coordinates in metres, triangle fronts counter-clockwise (the
// side that radiates). Prints CSV: the row of `surface` (default: the first), one line per
// receiving surface with the factor and its standard error, then the rays that left the scene
// and the row sum. Warnings (flipped normals, leaks, mesh remarks) go to stderr.
#include <cstdint>
#include <cstdio>
#include <cstdlib>
#include <exception>
#include <hearthray/pipeline.hpp>
#include <string>

int main(int argc, char** argv) {
  if (argc < 2 || argc > 4) {
    std::fprintf(stderr, "usage: view_factor_row mesh.obj [surface] [rays per surface]\n");
    return 2;
  }
  try {
    // 1. The mesh: surfaces from the OBJ groups, one patch per surface side.
    const hearthray::Scene scene = hearthray::load_obj(argv[1]);

    // 2. The view factors through the pipeline: trace, diagnose, smooth (reciprocity and
    //    closure to round-off; options.smooth = false keeps the plain ray estimate). The
    //    seed makes the run repeatable: the same seed and rays give the same bits on any
    //    number of threads.
    hearthray::PipelineOptions options;
    options.rays_per_patch = 100000;
    options.seed = 1;
    if (argc > 3) {
      char* end = nullptr;
      options.rays_per_patch = std::strtoull(argv[3], &end, 10);
      if (*end != '\0' || *options.rays_per_patch == 0)
        throw hearthray::InputError(std::string("rays per surface: not a positive count: ") +
                                    argv[3]);
    }
    const hearthray::FactorRun run = hearthray::run_view_factors(scene, options);
    for (const hearthray::Warning& w : run.warnings)
      std::fprintf(stderr, "warning: %s\n", w.text.c_str());
    if (!run.smoothing.converged)
      throw hearthray::InputError("smoothing: " + run.smoothing.message);

    // 3. The matrix: vf.F is sparse and row-major, row i holding the factors from patch i to
    //    every patch it sees; the standard error of a factor F from N rays is
    //    vf.standard_error(i, F) = sqrt(F (1 - F) / N).
    const hearthray::ViewFactors& vf = run.factors;
    std::size_t row = 0;
    if (argc > 2) {
      while (row < vf.size() && vf.names[row] != argv[2]) ++row;
      if (row == vf.size()) throw hearthray::InputError(std::string("no surface ") + argv[2]);
    }
    std::printf("# view factors from %s (%llu rays, smoothed)\n", vf.names[row].c_str(),
                static_cast<unsigned long long>(vf.rays[row]));
    std::printf("to,factor,standard_error\n");
    double sum = 0;
    for (hearthray::SparseMatrix::InnerIterator it(vf.F, Eigen::Index(row)); it; ++it) {
      const double f = it.value();
      std::printf("%s,%.6f,%.6f\n", vf.names[std::size_t(it.col())].c_str(), f,
                  vf.standard_error(row, f));
      sum += f;
    }
    const double out = vf.to_surroundings[row] + vf.to_back_faces[row];
    std::printf("(left the scene or hit a back face),%.6f,%.6f\n", out,
                vf.standard_error(row, out));
    std::printf("sum,%.12f,\n", sum + out);
    return 0;
  } catch (const hearthray::InputError& e) {
    std::fprintf(stderr, "error: %s\n", e.what());
    return 2;
  } catch (const std::exception& e) {
    std::fprintf(stderr, "error: %s\n", e.what());
    return 3;
  }
}
