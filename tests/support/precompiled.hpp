// Precompiled header of the test executable. Ceres' logging library defines
// a CHECK macro of its own; it is included first and its CHECK removed, so
// that every test file sees Catch2's CHECK whatever it includes afterwards.
#pragma once
#include <ceres/ceres.h>
#undef CHECK
#include <catch2/catch.hpp>
#include <nlohmann/json.hpp>
#include <Eigen/Dense>
#include <string>
#include <vector>
