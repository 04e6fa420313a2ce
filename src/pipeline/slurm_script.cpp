// The Slurm submission script of a sample run (see the header).
#include "fulcrum/pipeline/slurm_script.hpp"

#include <algorithm>
#include <cctype>
#include <cmath>
#include <filesystem>
#include <sstream>

#include "fulcrum/core/error.hpp"
#include "fulcrum/core/settings_check.hpp"
#include "fulcrum/core/version.hpp"
#include "fulcrum/io/atomic_file.hpp"

namespace fulcrum::pipeline {

namespace fs = std::filesystem;

namespace {

bool has_control_characters(const std::string& text) {
  return std::any_of(text.begin(), text.end(), [](char c) { return static_cast<unsigned char>(c) < 0x20 || c == 0x7f; });
}

// A path the script names: absolute, without control characters (which
// would break the here-documents and the logs' names).
std::string script_path(const std::string& setting, const std::string& path) {
  if (path.empty() || has_control_characters(path)) {
    std::string shown = path;  // the refusal stays on one line
    for (char& c : shown)
      if (static_cast<unsigned char>(c) < 0x20 || c == 0x7f) c = '?';
    throw SettingError(setting, "'" + shown + "'", "a path without control characters");
  }
  return fs::absolute(path).lexically_normal().string();
}

// The job name: the sample name's letters and digits (others as '-').
std::string job_name(const std::string& sample) {
  std::string n = "fulcrum";
  if (!sample.empty()) n += "-";
  for (char c : sample.substr(0, 40))
    n += std::isalnum(static_cast<unsigned char>(c)) || c == '_' || c == '-' ? c : '-';
  return n;
}

std::string own_executable() {
  std::error_code ec;
  const fs::path p = fs::read_symlink("/proc/self/exe", ec);
  if (ec) throw InputError("/proc/self/exe", "cannot tell where this fulcrum is; give its path");
  return p.string();
}

struct Paths {
  std::string fulcrum, manifest, out;
};

// `fulcrum run` of one array task, as the shard's batch script says it.
std::string shard_command(const Paths& p, const SlurmJobOptions& o, int shards) {
  std::ostringstream c;
  c << "exec " << shell_quote(p.fulcrum) << " --quiet --force run " << shell_quote(p.manifest)
    << " \\\n  --shard \"${SLURM_ARRAY_TASK_ID}/" << shards << "\" --threads \"${SLURM_CPUS_PER_TASK:-1}\""
    << " \\\n  --out " << shell_quote(p.out + "/shards/") << "\"${SLURM_ARRAY_TASK_ID}\"";
  if (o.draws) c << " --draws " << *o.draws;
  if (o.calibrate) c << " --calibrate " << *o.calibrate;
  if (o.seed) c << " --seed " << *o.seed;
  if (!o.figures) c << " --no-figures";
  if (o.bootstrap_from_estimates) c << " --bootstrap-centres all-estimates";
  return c.str();
}

std::string merge_command(const Paths& p, int shards) {
  std::ostringstream c;
  c << "exec " << shell_quote(p.fulcrum) << " --quiet --force merge";
  for (int i = 1; i <= shards; ++i) c << " \\\n  " << shell_quote(p.out + "/shards/" + std::to_string(i));
  c << " \\\n  --out " << shell_quote(p.out);
  return c.str();
}

std::string header(const SampleManifest& m, const Paths& p, const ShardResources& r) {
  std::ostringstream s;
  s << "#!/bin/bash\n"
    << "# Runs the sample " << shell_quote(m.name) << " on Slurm: a job array of " << r.shards
    << (r.shards == 1 ? " shard" : " shards") << " and the merge,\n"
    << "# which starts once every shard has succeeded. Written by fulcrum " << version_string()
    << " (`fulcrum run --slurm-script`;\n"
    << "# docs/cluster.md).\n"
    << "#\n"
    << "#   bash THIS-SCRIPT            submit every shard and the merge\n"
    << "#   bash THIS-SCRIPT I [J ...]  submit shards I, J, ... again and a new merge\n"
    << "#                               (after a shard failed; cancels the earlier merge)\n"
    << "#\n"
    << "# manifest: " << p.manifest << "\n"
    << "# output:   " << p.out << " (shards in shards/, Slurm logs in slurm/)\n"
    << "# Each shard asks for " << r.cores << (r.cores == 1 ? " core, " : " cores, ") << r.memory_mb
    << " MB and " << slurm_time(r.minutes) << ", estimated from its\n"
    << "# galaxies (at most " << r.largest_shard << "), the largest map (" << r.largest_map_pixels
    << " pixels), " << r.draws << " draws and " << r.mocks_per_set << " calibration mocks per set.\n"
    << "set -euo pipefail\n\n";
  return s.str();
}

}  // namespace

std::string shell_quote(const std::string& text) {
  std::string q = "'";
  for (char c : text) q += c == '\'' ? std::string("'\\''") : std::string(1, c);
  return q + "'";
}

SlurmJobSet slurm_job_set(const SampleManifest& m, const SlurmJobOptions& o) {
  const int n = static_cast<int>(m.galaxies.size());
  if (n == 0) throw InputError(m.path, "lists no galaxy");
  const int shards = o.shards != 0 ? static_cast<int>(check_integer_in_range("shards", o.shards, 1, n))
                                   : (n + kGalaxiesPerShard - 1) / kGalaxiesPerShard;
  if (!o.partition.empty()) check_plain_name("slurm_partition", o.partition);
  if (!o.account.empty()) check_plain_name("slurm_account", o.account);
  const std::string exe = o.fulcrum_path.empty() ? own_executable() : o.fulcrum_path;
  if (has_control_characters(exe)) throw InputError(exe, "the path of fulcrum holds control characters");
  Paths p{fs::absolute(exe).lexically_normal().string(), script_path("manifest", m.path),
          script_path("out", o.out_dir)};
  const int draws = o.draws.value_or(m.draws), mocks = o.calibrate.value_or(m.calibrate);
  SlurmJobSet set;
  set.resources = shard_resources(galaxy_costs(m, draws, mocks), shards, draws, mocks);
  const ShardResources& r = set.resources;
  const int merge_mb = 512 + 4 * n, merge_minutes = 10 + (2 * n + 59) / 60;

  std::ostringstream s;
  s << header(m, p, r);
  s << "out=" << shell_quote(p.out) << "\n"
    << "shards=" << shards << "\n"
    << "command -v sbatch >/dev/null || { echo \"sbatch not found: run this on a Slurm login node\" >&2; exit 2; }\n"
    << "mkdir -p \"$out/shards\" \"$out/slurm\"\n"
    << "# One time stamp (created_utc) for every job of this output folder: the\n"
    << "# first submission's SOURCE_DATE_EPOCH, or its time.\n"
    << "[ -s \"$out/slurm/source-date-epoch\" ] ||\n"
    << "  echo \"${SOURCE_DATE_EPOCH:-$(date +%s)}\" > \"$out/slurm/source-date-epoch\"\n"
    << "epoch=$(cat \"$out/slurm/source-date-epoch\")\n"
    << "array=\"1-$shards\"\n"
    << "if [ $# -gt 0 ]; then\n"
    << "  for i in \"$@\"; do\n"
    << "    [[ \"$i\" =~ ^[0-9]+$ ]] && [ \"$i\" -ge 1 ] && [ \"$i\" -le \"$shards\" ] ||\n"
    << "      { echo \"shard '$i' is not a number from 1 to $shards\" >&2; exit 2; }\n"
    << "  done\n"
    << "  array=$(IFS=,; echo \"$*\")\n"
    << "  # The merge of the earlier submission waits for a shard that failed: never.\n"
    << "  [ -s \"$out/slurm/merge-job\" ] && scancel \"$(cat \"$out/slurm/merge-job\")\" 2>/dev/null || true\n"
    << "fi\n"
    << "common=(--export=\"ALL,SOURCE_DATE_EPOCH=$epoch\" --open-mode=append";
  if (!o.partition.empty()) s << " --partition=" << o.partition;
  if (!o.account.empty()) s << " --account=" << o.account;
  s << ")\n\n"
    << "array_job=$(sbatch --parsable \"${common[@]}\" --job-name=" << job_name(m.name) << " --array=\"$array\" \\\n"
    << "  --cpus-per-task=" << r.cores << " --mem=" << r.memory_mb << "M --time=" << slurm_time(r.minutes)
    << " --requeue \\\n"
    << "  --output=\"$out/slurm/shard-%a.log\" <<'FULCRUM_SHARD_JOB'\n"
    << "#!/bin/bash\n"
    << "# One shard of the sample: array task I runs `fulcrum run --shard I/" << shards << "`.\n"
    << "set -euo pipefail\n"
    << "export OMP_NUM_THREADS=\"${SLURM_CPUS_PER_TASK:-1}\"\n"
    << shard_command(p, o, shards) << "\n"
    << "FULCRUM_SHARD_JOB\n"
    << ")\n"
    << "array_job=${array_job%%;*}\n\n"
    << "merge_job=$(sbatch --parsable \"${common[@]}\" --job-name=" << job_name(m.name) << "-merge"
    << " --dependency=\"afterok:$array_job\" \\\n"
    << "  --cpus-per-task=1 --mem=" << merge_mb << "M --time=" << slurm_time(merge_minutes)
    << " --output=\"$out/slurm/merge.log\" <<'FULCRUM_MERGE_JOB'\n"
    << "#!/bin/bash\n"
    << "# The merge: refuses a missing or unfinished shard, naming it.\n"
    << "set -euo pipefail\n"
    << "export OMP_NUM_THREADS=1\n"
    << merge_command(p, shards) << "\n"
    << "FULCRUM_MERGE_JOB\n"
    << ")\n"
    << "merge_job=${merge_job%%;*}\n"
    << "echo \"$merge_job\" > \"$out/slurm/merge-job\"\n"
    << "echo \"shards: job $array_job (array $array); merge: job $merge_job (after every shard succeeded)\"\n";
  set.script = s.str();
  return set;
}

SlurmJobSet write_slurm_script(const SampleManifest& m, const SlurmJobOptions& o, const std::string& path,
                               bool overwrite) {
  if (fs::exists(path) && !overwrite)
    throw InputError(path, "exists; allow overwriting (" + setting_ref("overwrite") + ") or choose another name");
  SlurmJobSet set = slurm_job_set(m, o);
  write_text_file(path, set.script);
  std::error_code ec;
  fs::permissions(path, fs::perms::owner_exec | fs::perms::group_exec | fs::perms::others_exec,
                  fs::perm_options::add, ec);
  return set;
}

}  // namespace fulcrum::pipeline
