// Resource estimate of the shards of a sample run (see the header for the
// formula; docs/cluster.md for the measurements behind the constants).
#include "fulcrum/pipeline/shard_resources.hpp"

#include <algorithm>
#include <cmath>
#include <sstream>

#include "fulcrum/core/error.hpp"
#include "fulcrum/core/log.hpp"
#include "fulcrum/io/fits_image.hpp"

namespace fulcrum::pipeline {

namespace {

// Pixels of one plane and voxels of a FITS file's first image.
struct Extent {
  std::int64_t plane = 0, voxels = 0;
};

Extent extent_of(const std::string& path) {
  if (path.empty()) return {};
  const auto axes = fits_image_axes(path);
  Extent e;
  e.plane = axes.size() >= 2 ? static_cast<std::int64_t>(axes[0]) * axes[1] : 0;
  e.voxels = 1;
  for (long n : axes) e.voxels *= n;
  return e;
}

void measure(const GalaxyInput& g, GalaxyCost& c) {
  if (!g.cube.empty()) {
    const Extent e = extent_of(g.cube);
    c.pixels = e.plane;
    c.voxels = e.voxels;
  }
  for (const std::string* p : {&g.velocity, &g.intensity, &g.optical, &g.tail_image})
    c.pixels = std::max(c.pixels, extent_of(*p).plane);
}

constexpr double kBaseBytes = 256.0 * 1024 * 1024;
constexpr std::int64_t kMemoryStepMb = 256;
constexpr int kMarginMinutes = 10;
constexpr double kTimeFactor = 2.0;

}  // namespace

std::vector<GalaxyCost> galaxy_costs(const SampleManifest& manifest, int draws, int mocks_per_set,
                                     const CostModel& m) {
  std::vector<GalaxyCost> out;
  for (const auto& g : manifest.galaxies) {
    GalaxyCost c;
    c.name = g.name;
    try {
      measure(g, c);
    } catch (const InputError& e) {
      warn(g.name + ": its size is unknown, counted as empty in the resource estimate: " + e.what());
    }
    const double p = static_cast<double>(c.pixels), v = static_cast<double>(c.voxels);
    c.cpu_seconds = m.start_seconds + m.seconds_per_pixel * p + m.seconds_per_draw * draws + m.seconds_per_voxel * v +
                    (mocks_per_set > 0 ? m.seconds_per_mock_pixel * (2.0 * mocks_per_set + 8.0) * p : 0.0);
    c.bytes = m.bytes_per_pixel * p + m.bytes_per_voxel * v;
    out.push_back(c);
  }
  return out;
}

ShardResources shard_resources(const std::vector<GalaxyCost>& costs, int shards, int draws, int mocks_per_set) {
  FULCRUM_CHECK(shards >= 1 && static_cast<std::size_t>(shards) <= std::max<std::size_t>(costs.size(), 1),
                "between 1 and the number of galaxies", shards);
  ShardResources r;
  r.shards = shards;
  r.draws = draws;
  r.mocks_per_set = mocks_per_set;
  r.galaxies = costs;
  double worst_bytes = 0;
  for (int s = 0; s < shards; ++s) {
    int n = 0;
    double sum = 0, longest = 0, biggest = 0;
    for (std::size_t p = static_cast<std::size_t>(s); p < costs.size(); p += static_cast<std::size_t>(shards)) {
      ++n;
      sum += costs[p].cpu_seconds;
      longest = std::max(longest, costs[p].cpu_seconds);
      biggest = std::max(biggest, costs[p].bytes);
      r.largest_map_pixels = std::max(r.largest_map_pixels, costs[p].pixels);
    }
    const int k = std::max(1, std::min(n, kMaxCoresPerShard));
    r.largest_shard = std::max(r.largest_shard, n);
    r.cores = std::max(r.cores, k);
    r.estimated_seconds = std::max(r.estimated_seconds, std::max(longest, sum / k));
    worst_bytes = std::max(worst_bytes, kBaseBytes + k * biggest);
  }
  const double mb = worst_bytes / (1024.0 * 1024.0);
  r.memory_mb = static_cast<std::int64_t>(std::ceil(mb / kMemoryStepMb)) * kMemoryStepMb;
  r.minutes = static_cast<int>(std::ceil(kTimeFactor * r.estimated_seconds / 60.0)) + kMarginMinutes;
  return r;
}

std::string slurm_time(int minutes) {
  std::ostringstream s;
  s << minutes / 60 << ":" << (minutes % 60 < 10 ? "0" : "") << minutes % 60 << ":00";
  return s.str();
}

std::string resources_text(const ShardResources& r) {
  std::ostringstream s;
  s << r.shards << (r.shards == 1 ? " shard" : " shards") << " of at most " << r.largest_shard
    << (r.largest_shard == 1 ? " galaxy" : " galaxies") << "; each asks for " << r.cores
    << (r.cores == 1 ? " core, " : " cores, ") << r.memory_mb << " MB and " << slurm_time(r.minutes) << "\n"
    << "estimate from: largest map " << r.largest_map_pixels << " pixels, " << r.draws << " draws, "
    << r.mocks_per_set << " calibration mocks per set; slowest shard about "
    << static_cast<long long>(std::ceil(r.estimated_seconds)) << " s of work";
  return s.str();
}

}  // namespace fulcrum::pipeline
