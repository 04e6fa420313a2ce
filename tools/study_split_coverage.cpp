// The split's error bars on mock galaxies made by someone else: for each
// folder written by tests/python/mockgen.py (intensity.fits,
// intensity_error.fits, velocity.fits, velocity_error.fits, truth.json), fit
// the kinematic centre with the library's defaults, run the robustness
// analysis about it (tail PA from the truth, no aperture: every detected
// pixel, as the truth's expected footprint) and print one JSON line with A,
// its errors and intervals, P(A > 0), the verdict and the truth's A.
// tools/split_coverage_study.py drives it and turns the lines into the
// tables of docs/uncertainties.md.
//
// usage: study_split_coverage [--clip-snr T] [--draws N] [--tail-err DEG] [--noise-beams K] [--true-centre] DIR...
// (the analysis itself is tests/robustness/mockgen_analysis.hpp)
#include <cstdio>
#include <cstdlib>
#include <iostream>
#include <string>
#include <vector>

#include "robustness/mockgen_analysis.hpp"

using namespace fulcrum;

int main(int argc, char** argv) {
  test::MockgenRun run;
  std::vector<std::string> dirs;
  for (int i = 1; i < argc; ++i) {
    const std::string a = argv[i];
    if (a == "--clip-snr" && i + 1 < argc) run.clip_snr = std::atof(argv[++i]);
    else if (a == "--draws" && i + 1 < argc) run.draws = std::strtoul(argv[++i], nullptr, 10);
    else if (a == "--tail-err" && i + 1 < argc) run.tail_err_deg = std::atof(argv[++i]);
    else if (a == "--noise-beams" && i + 1 < argc) run.noise_correlation_beams = std::atof(argv[++i]);
    else if (a == "--true-centre") run.true_centre = true;
    else dirs.push_back(a);
  }
  if (dirs.empty()) {
    std::fprintf(stderr, "usage: study_split_coverage [--clip-snr T] [--draws N] [--tail-err DEG] [--noise-beams K] [--true-centre] DIR...\n");
    return 2;
  }
  for (const auto& d : dirs) {
    try {
      std::cout << test::analyse_mockgen(d, run).dump() << std::endl;
    } catch (const std::exception& e) {
      std::cout << nlohmann::json{{"dir", d}, {"error", e.what()}}.dump() << std::endl;
    }
  }
  return 0;
}
