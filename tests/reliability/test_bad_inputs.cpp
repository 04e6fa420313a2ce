// The bad-input catalogue: every case of fixtures/bad_inputs/catalogue.json run
// through the fulcrum executable.
//
// The inputs are regenerated into a temporary folder by
// tools/make_bad_inputs.py (python3-astropy/numpy; all invented). For each
// case the command runs with a fresh, empty output folder {out}; the test
// asserts the exit status and then
//  * for an error (exit != 0): stderr holds exactly one line apart from
//    warnings, "fulcrum: ...", that contains `names` (the file or option) and
//    matches `message`; the output folder holds nothing but what the case put
//    there beforehand (`precreate`), unchanged;
//  * for a repair (exit 0): a warning matching `warning`, and every `checks`
//    value in the JSON the command wrote, within its tolerance;
//  * always: no sanitizer or uncaught-exception report on stderr.
// A refusal may leave one documented record (`refusal_record`), a complete
// JSON whose status is not "ok".
// Cases whose subcommand (`requires`) is not in the executable yet are
// counted and listed as not run (printed at the end), never passed.
#include <catch2/catch.hpp>

#include <cmath>
#include <fstream>
#include <map>
#include <regex>
#include <set>
#include <sstream>

#include <nlohmann/json.hpp>

#include "../support/test_support.hpp"

namespace fs = std::filesystem;
using fulcrum::test::run_shell;
using nlohmann::json;

namespace {

std::string replace_all(std::string s, const std::string& from, const std::string& to) {
  for (std::size_t p = s.find(from); p != std::string::npos; p = s.find(from, p + to.size()))
    s.replace(p, from.size(), to);
  return s;
}

std::vector<std::string> lines_of(const std::string& text) {
  std::vector<std::string> out;
  std::istringstream in(text);
  for (std::string line; std::getline(in, line);)
    if (!line.empty()) out.push_back(line);
  return out;
}

bool is_warning(const std::string& line) { return line.rfind("fulcrum: warning:", 0) == 0; }

bool matches(const std::string& text, const std::string& pattern) {
  return std::regex_search(text, std::regex(pattern, std::regex::ECMAScript | std::regex::icase));
}

// Regular files under `dir` (relative paths).
std::set<std::string> files_under(const fs::path& dir) {
  std::set<std::string> out;
  if (!fs::exists(dir)) return out;
  for (const auto& e : fs::recursive_directory_iterator(dir))
    if (!e.is_directory()) out.insert(fs::relative(e.path(), dir).string());
  return out;
}

const fs::path& bad_inputs_dir() {
  static const fs::path dir = [] {
    auto d = fulcrum::test::temp_dir("bad-inputs");
    auto r = run_shell(std::string(FULCRUM_PYTHON) + " " + fulcrum::test::source_dir() +
                       "/tools/make_bad_inputs.py " + d.string());
    if (r.exit_code != 0) FAIL("tools/make_bad_inputs.py failed: " << r.err);
    return d;
  }();
  return dir;
}

json catalogue() {
  std::ifstream in(fulcrum::test::source_dir() + "/fixtures/bad_inputs/catalogue.json");
  REQUIRE(in.good());
  return json::parse(in);
}

bool subcommand_exists(const std::string& name) {
  static std::map<std::string, bool> known;
  auto it = known.find(name);
  if (it != known.end()) return it->second;
  // Listed under "Subcommands:" in `fulcrum --help` (asking `fulcrum NAME
  // --help` is no test: help wins over an unknown positional).
  const auto help = run_shell(std::string(FULCRUM_BINARY) + " --help").out;
  const bool ok = matches(help, "\\n  " + name + "( |\\n)");
  known[name] = ok;
  return ok;
}

const json* lookup(const json& j, const std::string& dotted) {
  const json* cur = &j;
  std::istringstream parts(dotted);
  for (std::string key; std::getline(parts, key, '.');) {
    if (cur->is_array() && !key.empty() && key.find_first_not_of("0123456789") == std::string::npos) {
      const std::size_t i = std::stoul(key);
      if (i >= cur->size()) return nullptr;
      cur = &(*cur)[i];
      continue;
    }
    if (!cur->is_object() || !cur->contains(key)) return nullptr;
    cur = &(*cur)[key];
  }
  return cur;
}

}  // namespace

TEST_CASE("bad-input catalogue: one-line errors, exit status, nothing left behind",
          "[reliability][bad-inputs][python]") {
  const json cat = catalogue();
  const fs::path in = bad_inputs_dir();
  REQUIRE(cat["cases"].size() >= 40);

  std::map<std::string, int> not_run;  // subcommand -> cases
  int run = 0;
  for (const auto& c : cat["cases"]) {
    const std::string id = c["id"];
    UNSCOPED_INFO("running case " << id);
    const std::string requires_cmd = c.value("requires", "");
    if (!requires_cmd.empty() && !subcommand_exists(requires_cmd)) {
      ++not_run[requires_cmd];
      continue;
    }
    ++run;
    const fs::path out = fulcrum::test::temp_dir("case-" + id);
    auto expand = [&](std::string s) {
      return replace_all(replace_all(std::move(s), "{in}", in.string()), "{out}", out.string());
    };
    std::map<std::string, std::string> before;
    const json precreate = c.value("precreate", json::array());
    for (const auto& p : precreate) {
      fs::path path = expand(p.get<std::string>());
      fs::create_directories(path.parent_path());
      std::ofstream(path) << "written before the run by the test\n";
      before[fs::relative(path, out).string()] = "written before the run by the test\n";
    }
    std::string env = "OMP_NUM_THREADS=1";
    const json env_vars = c.value("env", json::object());
    for (const auto& [k, v] : env_vars.items())
      env += " " + k + "=" + v.get<std::string>();
    const std::string command = expand(c["command"].get<std::string>());
    const auto r = run_shell(env + " " + FULCRUM_BINARY + " " + command);

    INFO("case " << id << ": fulcrum " << command << "\nexit " << r.exit_code << "\nstderr:\n"
                 << r.err);
    CHECK(r.exit_code == c["exit"].get<int>());
    CHECK_FALSE(matches(r.err, "AddressSanitizer|LeakSanitizer|runtime error:|terminate called"));

    std::vector<std::string> errors;
    bool warned = false;
    for (const auto& line : lines_of(r.err)) {
      if (is_warning(line)) {
        warned = warned || !c.contains("warning") || matches(line, c["warning"].get<std::string>());
      } else if (line.rfind("fulcrum: ", 0) == 0) {
        errors.push_back(line);  // progress notes (no prefix) are allowed
      }
    }
    if (c["exit"].get<int>() != 0) {
      CHECK(errors.size() == 1);
      const std::string line = errors.empty() ? std::string() : errors[0];
      CHECK(line.rfind("fulcrum: ", 0) == 0);
      if (c.contains("names")) CHECK(line.find(expand(c["names"].get<std::string>())) != std::string::npos);
      if (c.contains("message")) CHECK(matches(line, c["message"].get<std::string>()));
      // Nothing written: only what the case put there, unchanged.
      std::set<std::string> expected;
      for (const auto& [rel, text] : before) expected.insert(rel);
      // A documented refusal record (e.g. kinematics writes its JSON with
      // status "refused" and the reason) is a complete file, allowed here.
      if (c.contains("refusal_record")) {
        const std::string rec = c["refusal_record"].get<std::string>();
        std::ifstream f(out / rec);
        const json j = json::parse(f, nullptr, false);
        CHECK((!j.is_discarded() && j.value("status", "") != "ok"));
        expected.insert(rec);
      }
      CHECK(files_under(out) == expected);
      for (const auto& [rel, text] : before) {
        std::ifstream f(out / rel);
        std::stringstream ss;
        ss << f.rdbuf();
        CHECK(ss.str() == text);
      }
    } else {
      CHECK(errors.empty());  // no error line when the run succeeds
      if (c.contains("warning")) CHECK(warned);
      const json checks = c.value("checks", json::array());
      for (const auto& chk : checks) {
        INFO("check " << chk.dump());
        std::ifstream f(expand(chk["file"].get<std::string>()));
        CHECK(f.good());
        if (!f.good()) continue;
        const json result = json::parse(f, nullptr, false);
        const json* v = lookup(result, chk["key"].get<std::string>());
        if (chk.contains("equals")) {
          CHECK((v != nullptr && *v == chk["equals"]));
          continue;
        }
        CHECK((v != nullptr && v->is_number()));
        if (v == nullptr || !v->is_number()) continue;
        // Tolerance: named in the catalogue beside its source.
        CHECK(std::abs(v->get<double>() - chk["value"].get<double>()) <= chk["tol"].get<double>());
      }
    }
    fs::remove_all(out);
  }

  std::ostringstream summary;
  summary << "bad-input catalogue: " << run << " of " << cat["cases"].size() << " cases run";
  for (const auto& [cmd, n] : not_run) summary << "; " << n << " not run (no `" << cmd << "` yet)";
  WARN(summary.str());
}
