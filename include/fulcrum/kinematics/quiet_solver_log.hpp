// Silences the solver's own log lines for one scope.
//
// Ceres reports through glog at ERROR level when a covariance is (near)
// rank deficient, which would print a stray line on stderr and break the
// one-line error rule. fulcrum detects that condition itself (Compute()
// returns false; fit_health.hpp) and puts the reason in the report, so the
// solver's line is dropped: while a QuietSolverLog lives, only FATAL glog
// messages are printed. Not thread-safe (glog's flag is global); fulcrum
// computes covariances on one thread.
#pragma once

#include <glog/logging.h>

namespace fulcrum::kinematics {

class QuietSolverLog {
 public:
  QuietSolverLog() : saved_(FLAGS_minloglevel) { FLAGS_minloglevel = google::GLOG_FATAL; }
  ~QuietSolverLog() { FLAGS_minloglevel = saved_; }
  QuietSolverLog(const QuietSolverLog&) = delete;
  QuietSolverLog& operator=(const QuietSolverLog&) = delete;

 private:
  int saved_;
};

}  // namespace fulcrum::kinematics
