// What one shard of a sample run asks a batch system for: cores, memory and
// wall time, estimated from the manifest before anything runs
// (docs/cluster.md explains the formula and where its constants come from).
//
// Per galaxy g, from the FITS headers of its inputs (no pixel is read):
//   P_g  pixels of its largest map (velocity, intensity, optical, tail image),
//        or of one plane of its cube
//   V_g  voxels of its cube (0 without one)
// and from the settings: D bootstrap draws, M matched mocks per set (the
// calibration draws 2M mocks: a symmetric and a lopsided set).
//
//   CPU seconds   t_g = t0 + a P_g + b D + v V_g + [M > 0] c (2M + 8) P_g
//   memory bytes  m_g = m_pix P_g + m_vox V_g
//
// (the "+ 8" is the calibration's set-up, about eight mocks' worth). A shard
// of n galaxies runs them k = min(n, kMaxCoresPerShard) at a time (OpenMP,
// one galaxy per core), so
//
//   cores    k
//   seconds  T = max(max_g t_g, sum_g t_g / k)
//   time     2 T + 10 minutes, in whole minutes
//   memory   256 MB + k max_g m_g, rounded up to a multiple of 256 MB
//
// and the array asks for the largest of its shards' needs. The constants
// are about twice what was measured on one core of a 2026 x86-64 machine
// (docs/cluster.md), so a slower cluster core still fits.
#pragma once

#include <cstdint>
#include <string>
#include <vector>

#include "fulcrum/pipeline/manifest.hpp"

namespace fulcrum::pipeline {

inline constexpr int kMaxCoresPerShard = 8;
inline constexpr int kGalaxiesPerShard = 4;  // the default number of shards: ceil(galaxies / this)

// The estimate's constants (see above).
struct CostModel {
  double start_seconds = 1.0;        // t0
  double seconds_per_pixel = 3e-5;   // a
  double seconds_per_draw = 1e-5;    // b
  double seconds_per_voxel = 4e-7;   // v
  double seconds_per_mock_pixel = 5e-6;  // c
  double bytes_per_pixel = 4096;     // m_pix
  double bytes_per_voxel = 48;       // m_vox
};

// One galaxy's size and cost.
struct GalaxyCost {
  std::string name;
  std::int64_t pixels = 0;  // P_g
  std::int64_t voxels = 0;  // V_g
  double cpu_seconds = 0;   // t_g
  double bytes = 0;         // m_g
};

struct ShardResources {
  int shards = 1;
  int largest_shard = 0;        // galaxies in the largest shard
  int cores = 1;                // per shard
  std::int64_t memory_mb = 0;   // per shard
  int minutes = 0;              // time limit per shard
  double estimated_seconds = 0; // T of the slowest shard, before the margin
  std::int64_t largest_map_pixels = 0;
  int draws = 0;
  int mocks_per_set = 0;
  std::vector<GalaxyCost> galaxies;  // manifest order
};

// Reads the axes of each galaxy's inputs (io/fits_image.hpp,
// fits_image_axes); an input that cannot be read is warned about and
// counted as empty (the run will report that galaxy undetermined).
std::vector<GalaxyCost> galaxy_costs(const SampleManifest& manifest, int draws, int mocks_per_set,
                                     const CostModel& model = {});
// The needs of `shards` shards (shard I takes the galaxies at positions p
// with p % shards == I - 1, as pipeline::select_galaxies does).
ShardResources shard_resources(const std::vector<GalaxyCost>& costs, int shards, int draws, int mocks_per_set);

// "4 cores, 1024 MB, 0:25:00 per shard" and the inputs of the estimate, as
// lines for a person.
std::string resources_text(const ShardResources& r);
// Slurm's time format, H:MM:SS.
std::string slurm_time(int minutes);

}  // namespace fulcrum::pipeline
