// The gas cache: scores stored and served back whole, keys that change with every input,
// damaged and foreign files rejected; through the tool, a second solve served from the cache
// with byte-identical files.
#include <catch2/catch.hpp>
#include <cmath>
#include <set>

#include "hearthray/gas_cache.hpp"
#include "support/cli_run.hpp"
#include "support/gas_fixtures.hpp"
#include "support/meshes.hpp"

using namespace hearthray;
using namespace hearthray::testing;

namespace {

struct CubeRun {
  std::string obj = unit_cube_obj();
  Scene scene = load_obj_text(obj, "cube");
  PatchSet patches = make_surface_patches(scene);
  std::vector<double> k{0.0, 0.5, 3.0};
  std::array<int, 3> cells{2, 1, 1};
  GasTraceOptions options;
  GasCacheSettings settings;

  CubeRun() {
    options.rays_per_patch = 2000;
    options.rays_per_cell = 2000;
    settings.patch_specs.assign(scene.surfaces.size(), PatchSpec{});
    settings.rays.assign(patches.size(), options.rays_per_patch);
    settings.rays_per_cell = options.rays_per_cell;
    settings.cells = cells;
    settings.k = k;
    settings.seed = options.seed;
  }
  TallyCacheKey key() const { return gas_cache_key(obj, MeshOptions{}, scene, settings); }
  std::vector<std::uint64_t> rays() const {
    std::vector<std::uint64_t> r = settings.rays;
    r.insert(r.end(), 2, options.rays_per_cell);
    return r;
  }
  GasScores trace() const {
    const Tracer tracer(scene);
    return trace_gas_scores(scene, patches, tracer, cells, k, options);
  }
};

}  // namespace

TEST_CASE("gas cache: stored scores come back whole and give the same exchange areas",
          "[gas][cache]") {
  const ScratchDir dir("gas-cache");
  const CubeRun run;
  const GasScores traced = run.trace();
  const CacheWrite written = store_cached_gas_scores(dir.cache(), run.key(), traced);
  REQUIRE(written.stored);
  CHECK(written.path == gas_cache_path(dir.cache(), run.key()));
  // No temporary file is left beside it (the write is a rename).
  int files = 0;
  for (const auto& e : std::filesystem::directory_iterator(dir.cache())) ++files, (void)e;
  CHECK(files == 1);
  const CachedGasScores cached = load_cached_gas_scores(dir.cache(), run.key(), run.rays(), 2, 3);
  INFO(cached.reason);
  REQUIRE(cached.status == CacheStatus::hit);
  const GasScores& s = cached.scores;
  CHECK(s.rays == traced.rays);
  CHECK(s.offset == traced.offset);
  CHECK(s.column == traced.column);
  CHECK(s.sum == traced.sum);
  CHECK(s.sq == traced.sq);
  CHECK(s.lost == traced.lost);
  CHECK(s.inside == traced.inside);
  GasExchange a =
      gas_exchange_from_scores(run.scene, run.patches, run.cells, run.k, traced, run.options);
  GasExchange b =
      gas_exchange_from_scores(run.scene, run.patches, run.cells, run.k, s, run.options);
  smooth_gas_exchange(a);
  smooth_gas_exchange(b);
  for (std::size_t g = 0; g < 3; ++g) CHECK((a.S[g].array() == b.S[g].array()).all());
  CHECK(a.volume == b.volume);
}

TEST_CASE("gas cache keys change with every input they depend on", "[gas][cache]") {
  const CubeRun base;
  std::vector<TallyCacheKey> keys{base.key()};
  auto with = [&](auto change) {
    CubeRun r;
    MeshOptions mesh;
    change(r, mesh);
    keys.push_back(gas_cache_key(r.obj, mesh, r.scene, r.settings));
  };
  with([](CubeRun& r, MeshOptions&) { r.obj += "\n"; });  // mesh bytes
  with([](CubeRun&, MeshOptions& m) { m.unit = LengthUnit::mm; });
  with([](CubeRun&, MeshOptions& m) { m.surfaces_from = SurfacesFrom::materials; });
  with([](CubeRun& r, MeshOptions&) { r.settings.patch_specs[2] = {PatchSpec::Mode::size, 0.5}; });
  with([](CubeRun& r, MeshOptions&) { r.settings.rays[3] += 1; });
  with([](CubeRun& r, MeshOptions&) { r.settings.rays_per_cell += 1; });
  with([](CubeRun& r, MeshOptions&) { r.settings.cells = {1, 2, 1}; });
  with([](CubeRun& r, MeshOptions&) { r.settings.k[1] = std::nextafter(0.5, 1.0); });
  with([](CubeRun& r, MeshOptions&) { r.settings.k.push_back(10.0); });
  with([](CubeRun& r, MeshOptions&) { r.settings.seed = 2; });
  with([](CubeRun& r, MeshOptions&) { r.settings.sampler = EmissionSampler::sobol; });
  with([](CubeRun& r, MeshOptions&) { r.scene.surfaces[0].name = "hearth"; });
  std::set<std::string> distinct;
  for (const TallyCacheKey& k : keys) distinct.insert(k.hex());
  CHECK(distinct.size() == keys.size());
  // A changed input looks for another file: a miss, never the old scores.
  const ScratchDir dir("gas-cache-keys");
  REQUIRE(store_cached_gas_scores(dir.cache(), keys[0], base.trace()).stored);
  for (std::size_t i = 1; i < keys.size(); ++i)
    CHECK(load_cached_gas_scores(dir.cache(), keys[i], base.rays(), 2, 3).status ==
          CacheStatus::missing);
}

TEST_CASE("damaged, foreign and mismatched gas cache files are rejected", "[gas][cache]") {
  const ScratchDir dir("gas-cache-bad");
  const CubeRun run;
  const TallyCacheKey key = run.key();
  const std::string path = gas_cache_path(dir.cache(), key);
  REQUIRE(store_cached_gas_scores(dir.cache(), key, run.trace()).stored);
  const std::string good = slurp(path);
  auto load_after = [&](const std::string& bytes) {
    write_text(path, bytes);
    return load_cached_gas_scores(dir.cache(), key, run.rays(), 2, 3);
  };
  CachedGasScores r = load_after(good.substr(0, good.size() - 5));
  CHECK(r.status == CacheStatus::rejected);
  CHECK_THAT(r.reason, Catch::Contains("length"));
  std::string flipped = good;
  flipped[good.size() - 3] ^= 0x10;
  r = load_after(flipped);
  CHECK(r.status == CacheStatus::rejected);
  CHECK_THAT(r.reason, Catch::Contains("checksum"));
  r = load_after(std::string(200, 'x'));  // as long as a header, but not one
  CHECK(r.status == CacheStatus::rejected);
  CHECK_THAT(r.reason, Catch::Contains("not a hearthray gas cache file"));
  r = load_after("short");
  CHECK(r.status == CacheStatus::rejected);
  // The view-factor cache's file under this name: another magic.
  r = load_after("hrtally" + std::string(200, '\0'));
  CHECK(r.status == CacheStatus::rejected);
  // Another key's file under this key's name.
  CubeRun other;
  other.settings.seed = 9;
  REQUIRE(store_cached_gas_scores(dir.cache(), other.key(), other.trace()).stored);
  r = load_after(slurp(gas_cache_path(dir.cache(), other.key())));
  CHECK(r.status == CacheStatus::rejected);
  CHECK_THAT(r.reason, Catch::Contains("another key"));
  // The right file, asked for another run's sizes.
  write_text(path, good);
  CHECK(load_cached_gas_scores(dir.cache(), key, run.rays(), 2, 3).status == CacheStatus::hit);
  std::vector<std::uint64_t> rays = run.rays();
  rays[0] += 1;
  CHECK(load_cached_gas_scores(dir.cache(), key, rays, 2, 3).status == CacheStatus::rejected);
  CHECK(load_cached_gas_scores(dir.cache(), key, run.rays(), 2, 4).status == CacheStatus::rejected);
}

TEST_CASE("a second gas solve is served from the cache with byte-identical files",
          "[gas][cache][cli]") {
  const ScratchDir dir("gas-cache-cli");
  write_text(dir / "box.obj", box_with_load_obj(2, 1, 1, 0.75, 0.25, 0.05, 0.5));
  const std::string scene = R"([mesh]
file = "box.obj"
unit = "m"

[rays]
per_patch = 3000
seed = 4

[defaults]
emissivity = 0.75
adiabatic = true
wall = { U = "1.2 W/m2K", outside = "20 C" }

[surface.load]
emissivity = 0.85
temperature = "700 C"

[gas]
cells = [2, 1, 1]
rays_per_cell = 3000
flow = "+x"
release = [1.0]
load = ["load"]

[gas.firing]
fuel = "natural gas"
rate = "100 kW"
excess_air = "10 %"
)";
  write_text(dir / "scene.toml", scene);
  auto solve = [&](const std::string& out, const std::string& extra) {
    const CliResult r = run_cli(
        "solve '" + (dir / "scene.toml").string() + "' -o '" + (dir / out).string() + "' " + extra,
        dir);
    INFO(r.err);
    REQUIRE(r.status == 0);
    return r.out;
  };
  CHECK_THAT(solve("first", ""), Catch::Contains("gas exchange areas: traced; stored in cache"));
  CHECK_THAT(solve("second", ""), Catch::Contains("gas exchange areas: from cache"));
  CHECK_THAT(solve("third", "--no-cache"), Catch::Contains("traced (cache not used)"));
  for (const char* f :
       {"report.json", "zones.csv", "gas_patches.csv", "zones.vtu", "patches.vtu", "gas_zones.png"})
    for (const char* run : {"second", "third"}) {
      INFO(f << " of the " << run << " run");
      CHECK(slurp(dir / "first" / f) == slurp(dir / run / f));
    }
  // A changed input misses: another seed, and another composition of the products (excess
  // air changes the absorption coefficients).
  CHECK_THAT(solve("seed", "--seed 5"), Catch::Contains("traced; stored in cache"));
  std::string leaner = scene;
  leaner.replace(leaner.find("\"10 %\""), 6, "\"30 %\"");
  write_text(dir / "scene.toml", leaner);
  CHECK_THAT(solve("lean", ""), Catch::Contains("traced; stored in cache"));
  // A panel placed by the scene file changes the geometry: placed, then moved, it misses;
  // the moved one, solved again, is served.
  auto with_panel = [&](const char* x) {
    write_text(dir / "scene.toml",
               leaner + "\n[panel.lid]\non = \"roof\"\ncentre = [\"" + x +
                   " m\", \"0.5 m\", \"1 m\"]\nsize = [\"0.5 m\", \"0.4 m\"]\n");
  };
  with_panel("1");
  CHECK_THAT(solve("panel", ""), Catch::Contains("traced; stored in cache"));
  with_panel("1.2");
  CHECK_THAT(solve("moved", ""), Catch::Contains("traced; stored in cache"));
  CHECK_THAT(solve("moved-again", ""), Catch::Contains("gas exchange areas: from cache"));
}
