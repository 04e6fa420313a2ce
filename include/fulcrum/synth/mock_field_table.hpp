// The parameters of a mock galaxy as a table: name, member and a one-line
// meaning with its unit. The TOML reader, the JSON writer and the `fulcrum
// synth` command-line options are all generated from these tables, so the
// three always agree (CLI option --<section>-<name> with '_' as '-').
#pragma once

#include <cstdint>
#include <string>
#include <variant>
#include <vector>

#include "fulcrum/synth/mock_galaxy.hpp"

namespace fulcrum::synth {

template <class S>
struct Field {
  const char* name;
  std::variant<double S::*, int S::*, bool S::*, std::string S::*, std::uint64_t S::*> member;
  const char* help;
};

const std::vector<Field<MockGalaxy>>& galaxy_fields();
const std::vector<Field<GridSpec>>& grid_fields();
const std::vector<Field<OpticalSpec>>& optical_fields();
const std::vector<Field<CubeSpec>>& cube_fields();
const std::vector<Field<DeliveredSpec>>& delivered_fields();

}  // namespace fulcrum::synth
