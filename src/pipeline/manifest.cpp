// TOML sample manifests (toml++), with line-numbered errors.
#include "fulcrum/pipeline/manifest.hpp"

#include <algorithm>
#include <filesystem>
#include <cmath>
#include <fstream>
#include <map>
#include <set>
#include <sstream>

#include <toml++/toml.h>

#include "fulcrum/core/work_limit.hpp"
#include "fulcrum/core/error.hpp"
#include "fulcrum/core/random.hpp"
#include "fulcrum/core/settings_check.hpp"
#include "fulcrum/pipeline/input_settings.hpp"

namespace fulcrum::pipeline {

namespace fs = std::filesystem;

namespace {

// Limits on what a manifest may hold (read_manifest, read_galaxy).
constexpr std::size_t kMaxGalaxyNameBytes = 200;
constexpr std::uintmax_t kMaxManifestBytes = 16u << 20;  // 16 MiB

struct Ctx {
  std::string path;
  std::string folder;
};

int line_of(const toml::node& n) { return static_cast<int>(n.source().begin.line); }

[[noreturn]] void fail(const Ctx& c, int line, const std::string& what) {
  throw InputError(c.path, "line " + std::to_string(line) + ": " + what);
}

std::string resolve(const Ctx& c, const std::string& p) {
  if (p.empty()) return p;
  fs::path q(p);
  if (q.is_absolute()) return q.lexically_normal().string();
  return (fs::path(c.folder) / q).lexically_normal().string();
}

std::string get_string(const Ctx& c, const toml::node& n, const std::string& key) {
  if (!n.is_string()) fail(c, line_of(n), "'" + key + "' must be a string (in quotes)");
  std::string s = *n.value<std::string>();
  if (s.empty()) fail(c, line_of(n), "'" + key + "' is empty");
  return s;
}

double get_number(const Ctx& c, const toml::node& n, const std::string& key) {
  if (!n.is_number()) fail(c, line_of(n), "'" + key + "' must be a number");
  double v = *n.value<double>();
  if (!std::isfinite(v)) fail(c, line_of(n), "'" + key + "' must be finite");
  return v;
}

// A number for a setting whose checker (pipeline/input_settings.hpp) decides
// what is allowed; its SettingError becomes an error at this line.
template <typename Check>
auto checked(const Ctx& c, const toml::node& n, Check check) {
  try {
    return check();
  } catch (const SettingError& e) {
    fail(c, line_of(n), e.problem());
  }
}

double get_any_number(const Ctx& c, const toml::node& n, const std::string& key) {
  if (!n.is_number()) fail(c, line_of(n), "'" + key + "' must be a number");
  return *n.value<double>();
}

std::int64_t get_integer(const Ctx& c, const toml::node& n, const std::string& key) {
  if (!n.is_integer()) fail(c, line_of(n), "'" + key + "' must be an integer");
  return *n.value<std::int64_t>();
}

std::string known_list(const std::set<std::string>& keys) {
  std::string s;
  for (const auto& k : keys) s += (s.empty() ? "" : ", ") + k;
  return s;
}

const std::set<std::string> kMolecularKeys = {"co_line", "alpha_co", "co_ratio_21", "redshift"};

bool read_molecular(const Ctx& c, const std::string& key, const toml::node& n, MolecularGasInput& m) {
  if (key == "co_line") {
    const std::string v = get_string(c, n, key);
    m.co_line = checked(c, n, [&] { return setting::co_line(v); });
  } else if (key == "alpha_co") {
    const double v = get_any_number(c, n, key);
    m.alpha_co = checked(c, n, [&] { return setting::alpha_co(v); });
  } else if (key == "co_ratio_21") {
    const double v = get_any_number(c, n, key);
    m.co_ratio_21 = checked(c, n, [&] { return setting::co_ratio_21(v); });
  } else if (key == "redshift") {
    const double v = get_any_number(c, n, key);
    m.redshift = checked(c, n, [&] { return setting::redshift(v); });
  } else {
    return false;
  }
  return true;
}

// A galaxy's `moments` table: the settings of moments/moment_settings.hpp by name.
void read_moment_settings(const Ctx& c, const toml::node& n, MomentSettings& s) {
  const auto* t = n.as_table();
  if (!t) fail(c, line_of(n), "'moments' must be a table, e.g. moments = { mask = \"moment-masking\" }");
  auto settings = moment_settings(s);
  std::set<std::string> names;
  for (const auto& m : settings) names.insert(m.name);
  for (const auto& [k, node] : *t) {
    const std::string key(k.str());
    const int line = line_of(node);
    const MomentSetting* m = nullptr;
    for (const auto& x : settings)
      if (x.name == key) m = &x;
    if (!m) fail(c, line, "unknown key '" + key + "' in 'moments' (known keys: " + known_list(names) + ")");
    if (auto* p = std::get_if<std::string*>(&m->target)) {
      **p = m->is_path ? resolve(c, get_string(c, node, key)) : get_string(c, node, key);
    } else if (auto* d = std::get_if<double*>(&m->target)) {
      **d = get_number(c, node, key);
    } else if (auto* i = std::get_if<int*>(&m->target)) {
      const auto v = get_integer(c, node, key);
      if (v < -1000000 || v > 1000000) fail(c, line, "'" + key + "' is out of range");
      **i = static_cast<int>(v);
    } else if (auto* b = std::get_if<bool*>(&m->target)) {
      if (!node.is_boolean()) fail(c, line, "'" + key + "' must be true or false");
      **b = *node.value<bool>();
    }
  }
  const std::string problem = moment_settings_problem(s, [](const std::string& k) { return "'" + k + "'"; });
  if (!problem.empty()) fail(c, line_of(n), "moments: " + problem);
}

// A galaxy's `kinematics` table: the settings of
// kinematics/kinematic_settings.hpp by name.
void read_kinematic_settings(const Ctx& c, const toml::node& n, kinematics::KinematicSettings& s) {
  const auto* t = n.as_table();
  if (!t) fail(c, line_of(n), "'kinematics' must be a table, e.g. kinematics = { pa = 36.0, pa_err = 5.0 }");
  auto settings = kinematics::kinematic_settings(s);
  std::set<std::string> names;
  for (const auto& m : settings) names.insert(m.name);
  for (const auto& [k, node] : *t) {
    const std::string key(k.str());
    const kinematics::KinematicSetting* m = nullptr;
    for (const auto& x : settings)
      if (x.name == key) m = &x;
    if (!m) fail(c, line_of(node), "unknown key '" + key + "' in 'kinematics' (known keys: " + known_list(names) + ")");
    if (auto* str = std::get_if<std::string*>(&m->target)) {
      **str = get_string(c, node, key);
    } else if (auto* d = std::get_if<std::optional<double>*>(&m->target)) {
      **d = get_number(c, node, key);
    } else if (auto* b = std::get_if<bool*>(&m->target)) {
      if (!node.is_boolean()) fail(c, line_of(node), "'" + key + "' must be true or false");
      **b = *node.value<bool>();
    }
  }
  const std::string problem =
      kinematics::kinematic_settings_problem(s, [](const std::string& k) { return "'" + k + "'"; });
  if (!problem.empty()) fail(c, line_of(n), "kinematics: " + problem);
}

GalaxyInput read_galaxy(const Ctx& c, const toml::table& t, const MolecularGasInput& defaults,
                        int table_line) {
  static const std::set<std::string> keys = [] {
    std::set<std::string> k = {"name", "velocity", "velocity_error", "intensity", "intensity_error", "rms", "clip_snr",
                               "optical", "optical_mask", "psf_fwhm_arcsec", "tail_pa_deg",
                               "tail_pa_err_deg", "tail_image", "distance_mpc", "seed", "cube", "moments",
                               "kinematics", "centre_from"};
    k.insert(kMolecularKeys.begin(), kMolecularKeys.end());
    return k;
  }();
  GalaxyInput g;
  g.molecular = defaults;
  g.manifest_line = table_line;
  std::map<std::string, int> key_line;
  for (const auto& [k, node] : t) {
    std::string key(k.str());
    int line = line_of(node);
    if (!keys.count(key))
      fail(c, line, "unknown key '" + key + "' in [[galaxy]] (known keys: " + known_list(keys) + ")");
    key_line[key] = line;
    if (key == "name") g.name = get_string(c, node, key);
    else if (key == "cube") g.cube = resolve(c, get_string(c, node, key));
    else if (key == "moments") read_moment_settings(c, node, g.moments);
    else if (key == "kinematics") read_kinematic_settings(c, node, g.kinematic);
    else if (key == "velocity") g.velocity = resolve(c, get_string(c, node, key));
    else if (key == "velocity_error") g.velocity_error = resolve(c, get_string(c, node, key));
    else if (key == "intensity") g.intensity = resolve(c, get_string(c, node, key));
    else if (key == "intensity_error") g.intensity_error = resolve(c, get_string(c, node, key));
    else if (key == "optical") g.optical = resolve(c, get_string(c, node, key));
    else if (key == "optical_mask") g.optical_mask = resolve(c, get_string(c, node, key));
    else if (key == "tail_image") g.tail_image = resolve(c, get_string(c, node, key));
    else if (key == "rms") {
      const double v = get_any_number(c, node, key);
      g.rms = checked(c, node, [&] { return setting::rms(v); });
    } else if (key == "clip_snr") {
      const double v = get_any_number(c, node, key);
      g.clip_snr = checked(c, node, [&] { return setting::clip_snr(v); });
    } else if (key == "psf_fwhm_arcsec") {
      const double v = get_any_number(c, node, key);
      g.psf_fwhm_arcsec = checked(c, node, [&] { return setting::psf_fwhm_arcsec(v); });
    } else if (key == "tail_pa_deg") {
      const double v = get_any_number(c, node, key);
      g.tail_pa_deg = checked(c, node, [&] { return setting::tail_pa_deg(v); });
    } else if (key == "tail_pa_err_deg") {
      const double v = get_any_number(c, node, key);
      g.tail_pa_err_deg = checked(c, node, [&] { return setting::tail_pa_err_deg(v); });
    } else if (key == "distance_mpc") {
      const double v = get_any_number(c, node, key);
      g.distance_mpc = checked(c, node, [&] { return setting::distance_mpc(v); });
    } else if (key == "centre_from") {
      // One "NAME=RA,DEC,ERR" string or an array of them.
      std::vector<std::string> texts;
      if (const auto* arr = node.as_array()) {
        for (const auto& item : *arr) {
          if (!item.is_string()) fail(c, line_of(item), "'centre_from' entries must be strings \"NAME=RA,DEC,ERR\"");
          texts.push_back(item.as_string()->get());
        }
      } else {
        texts.push_back(get_string(c, node, key));
      }
      g.external_centres = checked(c, node, [&] { return setting::centres_from(texts); });
    } else if (key == "seed") {
      const auto v = get_integer(c, node, key);
      g.seed = checked(c, node, [&] { return setting::seed(v); });
    } else {
      read_molecular(c, key, node, g.molecular);
    }
  }
  if (g.name.empty()) fail(c, table_line, "[[galaxy]] has no 'name'");
  // The name becomes a folder name (at most 255 bytes on common file
  // systems, with room left for suffixes); a longer one is refused, shown cut.
  if (g.name.size() > kMaxGalaxyNameBytes)
    fail(c, table_line, "name = '" + g.name.substr(0, 40) + "...' (" + std::to_string(g.name.size()) +
                            " bytes) is not allowed: must be 1 to " + std::to_string(kMaxGalaxyNameBytes) +
                            " bytes (it names the galaxy's output folder)");
  for (char ch : g.name)
    if (ch == '/' || ch == '\\' || static_cast<unsigned char>(ch) < 32)
      fail(c, table_line, "galaxy name '" + g.name + "' must not contain '/', '\\' or control characters");
  if (g.name == "." || g.name == "..") fail(c, table_line, "galaxy name '" + g.name + "' is not allowed");
  if (!g.cube.empty()) {
    // The cube makes the maps and their errors: one or the other. Name the
    // line of whichever key comes second.
    for (const char* k : {"velocity", "velocity_error", "intensity", "intensity_error", "rms", "clip_snr"})
      if (key_line.count(k))
        fail(c, std::max(key_line[k], key_line["cube"]),
             "galaxy '" + g.name + "' gives both 'cube' (line " + std::to_string(key_line["cube"]) + ") and '" + k +
                 "' (line " + std::to_string(key_line[k]) +
                 "): the cube makes the velocity and intensity maps and their error maps; give one or the other");
  } else {
    if (key_line.count("moments"))
      fail(c, key_line["moments"], "galaxy '" + g.name + "' gives 'moments' settings but no 'cube'");
    if (g.velocity.empty())
      fail(c, table_line, "galaxy '" + g.name + "' has no 'velocity' file (or 'cube' to make the maps from)");
    if (g.intensity.empty())
      fail(c, table_line, "galaxy '" + g.name + "' has no 'intensity' file (or 'cube' to make the maps from)");
  }
  if (!g.intensity_error.empty() && g.rms)
    fail(c, table_line, "galaxy '" + g.name + "' gives both 'intensity_error' and 'rms': choose one");
  if (g.tail_pa_deg && !g.tail_image.empty())
    fail(c, table_line, "galaxy '" + g.name + "' gives both 'tail_pa_deg' and 'tail_image': choose one");
  if (!g.tail_pa_deg && g.tail_image.empty())
    fail(c, table_line, "galaxy '" + g.name + "' needs 'tail_pa_deg' or 'tail_image'");
  return g;
}

}  // namespace

SampleManifest parse_manifest(const std::string& text, const std::string& path) {
  Ctx c{path, fs::path(path).parent_path().string()};
  if (c.folder.empty()) c.folder = ".";
  toml::table root;
  try {
    root = toml::parse(text, path);
  } catch (const toml::parse_error& e) {
    throw InputError(path, "line " + std::to_string(e.source().begin.line) + ": " +
                               std::string(e.description()));
  }
  SampleManifest m;
  m.path = path;
  m.folder = c.folder;
  MolecularGasInput defaults;
  for (const auto& [k, node] : root) {
    std::string key(k.str());
    if (key == "sample") {
      auto* t = node.as_table();
      if (!t) fail(c, line_of(node), "'sample' must be a table: [sample]");
      static const std::set<std::string> keys = [] {
        std::set<std::string> s = {"name", "seed", "draws", "calibrate", "description"};
        s.insert(kMolecularKeys.begin(), kMolecularKeys.end());
        return s;
      }();
      for (const auto& [sk, sn] : *t) {
        std::string skey(sk.str());
        if (!keys.count(skey))
          fail(c, line_of(sn), "unknown key '" + skey + "' in [sample] (known keys: " + known_list(keys) + ")");
        if (skey == "name") m.name = get_string(c, sn, skey);
        else if (skey == "description") get_string(c, sn, skey);
        else if (skey == "seed") {
          const auto v = get_integer(c, sn, skey);
          m.seed = checked(c, sn, [&] { return setting::seed(v); });
        } else if (skey == "draws") {
          const auto v = get_integer(c, sn, skey);
          m.draws = checked(c, sn, [&] { return setting::draws(v); });
        } else if (skey == "calibrate") {
          const auto v = get_integer(c, sn, skey);
          m.calibrate = checked(c, sn, [&] { return setting::calibrate(v); });
        } else {
          read_molecular(c, skey, sn, defaults);
        }
      }
    } else if (key == "galaxy") {
      // Read after [sample] so that sample defaults apply whatever the order.
      if (!node.is_array_of_tables()) fail(c, line_of(node), "'galaxy' must be written [[galaxy]]");
    } else {
      fail(c, line_of(node), "unknown top-level key '" + key + "' (expected [sample] and [[galaxy]])");
    }
  }
  if (auto* arr = root["galaxy"].as_array()) {
    std::set<std::string> names;
    for (const auto& el : *arr) {
      const auto* t = el.as_table();
      int line = line_of(el);
      auto g = read_galaxy(c, *t, defaults, line);
      if (!names.insert(g.name).second) fail(c, line, "duplicate galaxy name '" + g.name + "'");
      m.galaxies.push_back(std::move(g));
    }
  }
  if (m.galaxies.empty()) throw InputError(path, "the manifest lists no [[galaxy]]");
  if (m.name.empty()) m.name = fs::path(path).stem().string();
  return m;
}

SampleManifest read_manifest(const std::string& path) {
  std::ifstream in(path, std::ios::binary);
  if (!in) throw InputError(path, "cannot open the sample manifest");
  // Checked before reading: a manifest lists galaxies in a few hundred bytes each.
  std::error_code ec;
  const auto bytes = fs::file_size(path, ec);
  const double limit = static_cast<double>(kMaxManifestBytes) * work_limit_scale();
  if (!ec && static_cast<double>(bytes) > limit)
    throw InputError(path, "is " + std::to_string(bytes) + " bytes; a sample manifest may be at most " +
                               estimate_text(limit) + " bytes (" + setting_ref("limit_scale") + " raises the limit)");
  std::stringstream ss;
  ss << in.rdbuf();
  return parse_manifest(ss.str(), path);
}

std::uint64_t galaxy_seed(std::uint64_t sample_seed, const GalaxyInput& galaxy) {
  if (galaxy.seed) return *galaxy.seed;
  std::uint64_t h = 1469598103934665603ull;
  for (unsigned char ch : galaxy.name) h = (h ^ ch) * 1099511628211ull;
  const std::uint64_t z = splitmix64_mix(sample_seed + 0x9e3779b97f4a7c15ull * (h | 1));
  // 53 bits, so that the seed is exact in JSON readers that use doubles.
  return z & ((1ull << 53) - 1);
}

Selection parse_shard(const std::string& text) {
  Selection s;
  auto slash = text.find('/');
  try {
    if (slash == std::string::npos) throw std::invalid_argument("no slash");
    std::size_t a = 0, b = 0;
    s.shard_index = std::stoi(text.substr(0, slash), &a);
    s.shard_count = std::stoi(text.substr(slash + 1), &b);
    if (a != slash || b != text.size() - slash - 1) throw std::invalid_argument("junk");
  } catch (const std::exception&) {
    throw InputError("", "shard must be I/N with whole numbers, e.g. 2/8 (got '" + text + "')");
  }
  if (s.shard_count < 1 || s.shard_index < 1 || s.shard_index > s.shard_count)
    throw InputError("", "shard I/N needs 1 <= I <= N (got '" + text + "')");
  return s;
}

std::vector<GalaxyInput> select_galaxies(const SampleManifest& manifest, const Selection& s) {
  std::set<std::string> only(s.only.begin(), s.only.end());
  for (const auto& name : only) {
    bool found = false;
    for (const auto& g : manifest.galaxies) found = found || g.name == name;
    if (!found) throw InputError(manifest.path, "only = " + name + ": no galaxy of that name in the manifest");
  }
  std::vector<GalaxyInput> out;
  for (std::size_t p = 0; p < manifest.galaxies.size(); ++p) {
    if (static_cast<int>(p % s.shard_count) != s.shard_index - 1) continue;
    const auto& g = manifest.galaxies[p];
    if (!only.empty() && !only.count(g.name)) continue;
    out.push_back(g);
  }
  return out;
}

}  // namespace fulcrum::pipeline
