// Output paths that would overwrite an input (or another output).
//
// Every command checks, before it reads or writes anything, that no file it
// will write is one of the files it reads: `scan --out P --json P` would
// replace the cube with the JSON, `kinematics --velocity X --json X --force`
// would destroy the input. Paths are compared after resolving `.`, `..` and
// symbolic links of the parts that exist (std::filesystem::weakly_canonical),
// so `./x.fits` and a link to it count as x.fits. --force never allows it.
//
// Each path comes with the setting that named it; the message names both
// settings with setting_ref() (the command line shows them as flags):
//
//   out.fits: `json` names the same file as `out`; give each output its own file
//   vel.fits: `json` names the input `velocity`; an output must not overwrite an input
#pragma once

#include <filesystem>
#include <string>
#include <utility>
#include <vector>

namespace fulcrum {

// (setting, path) pairs; empty paths are skipped. Throws InputError naming
// the path when an output equals an input or another output.
void check_distinct_paths(const std::vector<std::pair<std::string, std::string>>& inputs,
                          const std::vector<std::pair<std::string, std::string>>& outputs);

// For commands whose output is a folder that a run replaces whole (analyse,
// calibrate, moments; io/staged_folder.hpp): no input may lie in it.
//   OUT/vel.fits: the input `velocity` lies in the output folder `out`, ...
void check_inputs_outside_folder(const std::vector<std::pair<std::string, std::string>>& inputs,
                                 const std::pair<std::string, std::string>& folder);

// A path made comparable: absolute, `.`, `..` and the links of its existing
// part resolved (std::filesystem::weakly_canonical), without a trailing '/'.
std::filesystem::path comparable_path(const std::filesystem::path& p);

// True when `inner` is `outer` or lies under it (both comparable_path()).
bool path_lies_in(const std::filesystem::path& inner, const std::filesystem::path& outer);

}  // namespace fulcrum
