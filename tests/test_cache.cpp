// The view-factor cache: what the key depends on, a round trip of traced tallies, and every
// kind of bad file rejected rather than trusted.
#include <catch2/catch.hpp>
#include <cstdlib>
#include <filesystem>
#include <string>

#include "hearthray/cache.hpp"
#include "hearthray/tracer.hpp"
#include "support/cli_run.hpp"
#include "support/meshes.hpp"
#include "support/scene_fixtures.hpp"

using namespace hearthray;
using namespace hearthray::testing;
using Catch::Matchers::Contains;

namespace {

TallyCacheKey key_of(const LoadedScene& l, std::uint64_t rays = 1000, std::uint64_t seed = 1,
                     bool smoothed = true, EmissionSampler sampler = kDefaultSampler) {
  TallyCacheSettings settings;
  settings.sampler = sampler;
  settings.patch_specs = patch_specs(l.file, l.scene);
  settings.rays.assign(l.patches.size(), rays);
  settings.seed = seed;
  settings.smoothed = smoothed;
  return tally_cache_key(slurp(l.file.mesh_path), l.file.mesh, l.scene, settings);
}

Tallies trace(const LoadedScene& l, std::uint64_t rays) {
  ViewFactorOptions options;
  options.rays_per_patch = rays;
  const Tracer tracer(l.scene, options.tracer);
  return trace_tallies(l.scene, l.patches, tracer, options);
}

// Sets an environment variable for the life of the object, then restores it.
class EnvVar {
 public:
  EnvVar(const char* name, const char* value) : name_(name) {
    const char* old = std::getenv(name);
    had_ = old != nullptr;
    if (had_) old_ = old;
    if (value) {
      setenv(name, value, 1);
    } else {
      unsetenv(name);
    }
  }
  ~EnvVar() {
    if (had_) {
      setenv(name_, old_.c_str(), 1);
    } else {
      unsetenv(name_);
    }
  }

 private:
  const char* name_;
  bool had_ = false;
  std::string old_;
};

}  // namespace

TEST_CASE("the cache key follows the mesh bytes and every ray setting", "[cache]") {
  const ScratchDir dir("cache-key");
  const LoadedScene base = load_scene_text(dir, unit_cube_obj());
  const TallyCacheKey key = key_of(base);
  CHECK(key.hex().size() == 32);
  CHECK(key.hex().find_first_not_of("0123456789abcdef") == std::string::npos);
  CHECK(key_of(load_scene_text(dir, unit_cube_obj())) == key);  // same inputs, same key

  CHECK_FALSE(key_of(base, 1001) == key);
  CHECK_FALSE(key_of(base, 1000, 2) == key);
  CHECK_FALSE(key_of(base, 1000, 1, false) == key);
  CHECK_FALSE(key_of(base, 1000, 1, true, EmissionSampler::stratified) ==
              key_of(base, 1000, 1, true, EmissionSampler::sobol));
  CHECK_FALSE(key_of(load_scene_text(dir, unit_cube_obj() + "# a comment\n")) == key);
  CHECK_FALSE(key_of(load_scene_text(dir, unit_cube_obj(), "unit = \"mm\"\n")) == key);
  CHECK_FALSE(key_of(load_scene_text(dir, unit_cube_obj(), "[surface.east]\ntwo_sided = true\n")) ==
              key);
  CHECK_FALSE(key_of(load_scene_text(dir, unit_cube_obj(),
                                     "[surface.east]\npatches = \"0.5 m\"\n")) == key);
  // Each half of the key changes on its own (two independent hashes).
  const TallyCacheKey other = key_of(base, 1001);
  CHECK(other.fnv != key.fnv);
  CHECK(other.mix != key.mix);
}

TEST_CASE("tallies survive a round trip through the cache", "[cache]") {
  const ScratchDir dir("cache-roundtrip");
  const LoadedScene l = load_scene_text(dir, unit_cube_obj());
  const Tallies t = trace(l, 2000);
  const TallyCacheKey key = key_of(l, 2000);
  const std::string folder = (dir / "nested" / "cache").string();

  CHECK(load_cached_tallies(folder, key, l.scene, l.patches,
                            std::vector<std::uint64_t>(l.patches.size(), 2000))
            .status == CacheStatus::missing);
  const CacheWrite w = store_cached_tallies(folder, key, t, 0.25);
  REQUIRE(w.stored);
  CHECK(w.path == tally_cache_path(folder, key));
  CHECK(w.path.find(key.hex() + ".tallies") != std::string::npos);

  const CachedTallies c = load_cached_tallies(folder, key, l.scene, l.patches,
                                              std::vector<std::uint64_t>(l.patches.size(), 2000));
  REQUIRE(c.status == CacheStatus::hit);
  CHECK(c.trace_seconds == 0.25);
  CHECK(c.tallies.patch_count == t.patch_count);
  CHECK(c.tallies.rays == t.rays);
  CHECK(c.tallies.escaped == t.escaped);
  CHECK(c.tallies.back_face == t.back_face);
  CHECK(c.tallies.hit_offset == t.hit_offset);
  CHECK(c.tallies.hit_patch == t.hit_patch);
  CHECK(c.tallies.hit_count == t.hit_count);
  CHECK(c.tallies.hits_on_surface == t.hits_on_surface);
  CHECK(c.tallies.back_face_hits_on_surface == t.back_face_hits_on_surface);
  // The sobol sampler's replicate squares come back bit for bit (doubles as their IEEE bits).
  REQUIRE(kDefaultSampler == EmissionSampler::sobol);
  REQUIRE(!t.hit_square.empty());
  CHECK(c.tallies.hit_square == t.hit_square);
  CHECK(c.tallies.escaped_square == t.escaped_square);
  CHECK(c.tallies.back_face_square == t.back_face_square);
}

TEST_CASE("a bad cache file is rejected and never trusted", "[cache]") {
  const ScratchDir dir("cache-bad");
  const LoadedScene l = load_scene_text(dir, unit_cube_obj());
  const Tallies t = trace(l, 2000);
  const TallyCacheKey key = key_of(l, 2000);
  const std::string folder = dir.cache();
  REQUIRE(store_cached_tallies(folder, key, t, 0.1).stored);
  const std::string path = tally_cache_path(folder, key);
  const std::string good = slurp(path);

  auto rejected_with = [&](const std::string& bytes, const std::string& reason) {
    write_text(path, bytes);
    const CachedTallies c = load_cached_tallies(folder, key, l.scene, l.patches,
                                                std::vector<std::uint64_t>(l.patches.size(), 2000));
    INFO("reason: " << c.reason);
    CHECK(c.status == CacheStatus::rejected);
    CHECK_THAT(c.reason, Contains(reason));
    CHECK(c.tallies.rows() == 0);
  };
  auto flipped = [&](std::size_t at) {
    std::string bytes = good;
    bytes[at] = static_cast<char>(bytes[at] ^ 0x01);
    return bytes;
  };
  rejected_with("", "too short");
  rejected_with(std::string(200, 'x'), "not a hearthray tally file");
  rejected_with(flipped(8), "layout version");
  rejected_with(flipped(16), "another key");
  rejected_with(flipped(good.size() - 1), "checksum");
  rejected_with(good.substr(0, good.size() - 12), "length");
  rejected_with(good + std::string(5, '\0'), "length");

  // A valid file read for other settings: another rays count, or another scene's patches.
  write_text(path, good);
  CachedTallies c = load_cached_tallies(folder, key, l.scene, l.patches,
                                        std::vector<std::uint64_t>(l.patches.size(), 3000));
  CHECK(c.status == CacheStatus::rejected);
  CHECK_THAT(c.reason, Contains("rays"));
  const LoadedScene sheet =
      load_scene_text(dir, unit_cube_obj(), "[surface.east]\ntwo_sided = true\n");
  c = load_cached_tallies(folder, key, sheet.scene, sheet.patches,
                          std::vector<std::uint64_t>(sheet.patches.size(), 2000));
  CHECK(c.status == CacheStatus::rejected);
  CHECK_THAT(c.reason, Contains("patches"));

  // A folder where the file should be (the reader sizes its buffer from the file): taken as
  // no cache, not read.
  std::filesystem::remove(path);
  std::filesystem::create_directory(path);
  c = load_cached_tallies(folder, key, l.scene, l.patches,
                          std::vector<std::uint64_t>(l.patches.size(), 2000));
  CHECK(c.status == CacheStatus::missing);
  CHECK(c.tallies.rows() == 0);
  std::filesystem::remove(path);

  // A folder that cannot be made: reported, not thrown.
  write_text(dir / "a-file", "x");
  const CacheWrite w = store_cached_tallies((dir / "a-file" / "cache").string(), key, t, 0);
  CHECK_FALSE(w.stored);
  CHECK_THAT(w.reason, Contains("cannot create"));
}

TEST_CASE("the default cache folder follows the environment", "[cache]") {
  {
    const EnvVar a("HEARTHRAY_CACHE", "/tmp/hr-cache");
    const EnvVar b("XDG_CACHE_HOME", "/tmp/xdg");
    CHECK(default_cache_dir() == "/tmp/hr-cache");
  }
  {
    const EnvVar a("HEARTHRAY_CACHE", nullptr);
    const EnvVar b("XDG_CACHE_HOME", "/tmp/xdg");
    CHECK(default_cache_dir() == "/tmp/xdg/hearthray");
  }
  {
    const EnvVar a("HEARTHRAY_CACHE", "");
    const EnvVar b("XDG_CACHE_HOME", nullptr);
    const EnvVar c("HOME", "/home/someone");
    CHECK(default_cache_dir() == "/home/someone/.cache/hearthray");
  }
  {
    const EnvVar a("HEARTHRAY_CACHE", nullptr);
    const EnvVar b("XDG_CACHE_HOME", nullptr);
    const EnvVar c("HOME", nullptr);
    CHECK(default_cache_dir().empty());
  }
}
