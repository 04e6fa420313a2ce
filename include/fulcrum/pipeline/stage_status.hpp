// The status of one stage of the single-galaxy analysis: done, failed (with
// the reason) or skipped (its input is not given, or an earlier stage
// stopped the chain; with the reason). report.json writes the status as
// its lower-case name.
#pragma once

#include <string>

namespace fulcrum::pipeline {

enum class StageStatus { done, failed, skipped };

// "done", "failed", "skipped".
std::string stage_status_name(StageStatus s);

struct StageRecord {
  std::string stage;     // "inputs", "kinematics", "photometry", "split", "robustness"
  StageStatus status = StageStatus::skipped;
  std::string reason;    // empty when done
};

}  // namespace fulcrum::pipeline
