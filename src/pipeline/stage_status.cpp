// Stage status names (see include/fulcrum/pipeline/stage_status.hpp).
#include "fulcrum/pipeline/stage_status.hpp"

namespace fulcrum::pipeline {

std::string stage_status_name(StageStatus s) {
  switch (s) {
    case StageStatus::done: return "done";
    case StageStatus::failed: return "failed";
    case StageStatus::skipped: return "skipped";
  }
  return "failed";
}

}  // namespace fulcrum::pipeline
