// Mock galaxy parameters in and out: TOML files, JSON and the files a mock
// writes. One table of fields per struct drives all three, so that a
// parameter added to mock_galaxy.hpp needs one line here.
//
// TOML layout (keys are the C++ field names; every key is optional):
//   [galaxy]            name, seed, ra_deg, ..., expected_verdict
//   [galaxy.grid]       nx, ny, pixel_arcsec, rotation_deg, flip, projection, ...
//   [galaxy.optical]    enabled, offset_east_arcsec, sersic_n, ...
//   [galaxy.optical.grid]
//   [galaxy.cube]       enabled, n_channels, spectral_type, ...
// Unknown keys and wrong types are errors naming the file and line.
#include <filesystem>
#include <string>
#include <variant>
#include <vector>

#include <toml++/toml.h>

#include "fulcrum/core/error.hpp"
#include "fulcrum/io/atomic_file.hpp"
#include "fulcrum/io/fits_image.hpp"
#include "fulcrum/synth/mock_field_table.hpp"
#include "fulcrum/synth/mock_galaxy.hpp"

namespace fulcrum::synth {

namespace {

std::string where(const std::string& path, const toml::node& n) {
  const auto& src = n.source();
  return "line " + std::to_string(src.begin.line);
}

template <class S>
void read_fields(const toml::table& t, S& obj, const std::vector<Field<S>>& fields, const std::string& path,
                 const std::string& section, const std::vector<std::string>& subtables) {
  for (const auto& [key, node] : t) {
    const std::string k(key.str());
    if (std::find(subtables.begin(), subtables.end(), k) != subtables.end()) continue;
    const Field<S>* f = nullptr;
    for (const auto& c : fields)
      if (k == c.name) f = &c;
    if (!f)
      throw InputError(path, where(path, node) + ": unknown key '" + k + "' in [" + section + "]");
    auto bad = [&](const char* want) {
      throw InputError(path, where(path, node) + ": key '" + k + "' in [" + section + "] must be " + want);
    };
    std::visit(
        [&](auto member) {
          using T = std::remove_reference_t<decltype(obj.*member)>;
          if constexpr (std::is_same_v<T, double>) {
            if (auto v = node.template value<double>(); v && (node.is_floating_point() || node.is_integer()))
              obj.*member = *v;
            else
              bad("a number");
          } else if constexpr (std::is_same_v<T, int>) {
            if (auto v = node.template value<std::int64_t>(); v && node.is_integer())
              obj.*member = static_cast<int>(*v);
            else
              bad("an integer");
          } else if constexpr (std::is_same_v<T, std::uint64_t>) {
            auto v = node.template value<std::int64_t>();
            if (v && node.is_integer() && *v >= 0)
              obj.*member = static_cast<std::uint64_t>(*v);
            else
              bad("a non-negative integer");
          } else if constexpr (std::is_same_v<T, bool>) {
            if (auto v = node.template value<bool>(); v && node.is_boolean())
              obj.*member = *v;
            else
              bad("true or false");
          } else {
            if (auto v = node.template value<std::string>(); v && node.is_string())
              obj.*member = *v;
            else
              bad("a string");
          }
        },
        f->member);
  }
}

const toml::table* subtable(const toml::table& t, const char* key, const std::string& path) {
  const toml::node* n = t.get(key);
  if (!n) return nullptr;
  if (!n->is_table())
    throw InputError(path, where(path, *n) + ": '" + key + "' must be a table");
  return n->as_table();
}

template <class S>
nlohmann::json write_fields(const S& obj, const std::vector<Field<S>>& fields) {
  nlohmann::json j = nlohmann::json::object();
  for (const auto& f : fields) std::visit([&](auto member) { j[f.name] = obj.*member; }, f.member);
  return j;
}

}  // namespace

void mock_apply_toml(const toml::table& root, MockGalaxy& g, const std::string& path);

void mock_apply_toml(const toml::table& root, MockGalaxy& g, const std::string& path) {
  read_fields(root, g, galaxy_fields(), path, "galaxy", {"grid", "optical", "cube", "delivered"});
  if (auto* t = subtable(root, "grid", path))
    read_fields(*t, g.grid, grid_fields(), path, "galaxy.grid", {});
  if (auto* t = subtable(root, "optical", path)) {
    read_fields(*t, g.optical, optical_fields(), path, "galaxy.optical", {"grid"});
    if (auto* tg = subtable(*t, "grid", path))
      read_fields(*tg, g.optical.grid, grid_fields(), path, "galaxy.optical.grid", {});
  }
  if (auto* t = subtable(root, "cube", path))
    read_fields(*t, g.cube, cube_fields(), path, "galaxy.cube", {});
  if (auto* t = subtable(root, "delivered", path))
    read_fields(*t, g.delivered, delivered_fields(), path, "galaxy.delivered", {});
}

MockGalaxy mock_from_toml(const std::string& path) {
  toml::table tbl;
  try {
    tbl = toml::parse_file(path);
  } catch (const toml::parse_error& e) {
    std::string msg(e.description());
    if (!std::filesystem::exists(path)) throw InputError(path, "cannot open the file");
    throw InputError(path, "line " + std::to_string(e.source().begin.line) + ": " + msg);
  }
  for (const auto& [key, node] : tbl)
    if (key.str() != "galaxy")
      throw InputError(path, where(path, node) + ": unknown top-level key '" + std::string(key.str()) +
                                 "' (expected one [galaxy] table)");
  const toml::table* g = subtable(tbl, "galaxy", path);
  if (!g) throw InputError(path, "no [galaxy] table");
  MockGalaxy out;
  mock_apply_toml(*g, out, path);
  try {
    validate_mock(out);
  } catch (const InputError& e) {
    throw InputError(path, e.problem());
  }
  return out;
}

nlohmann::json mock_to_json(const MockGalaxy& g) {
  nlohmann::json j = write_fields(g, galaxy_fields());
  j["grid"] = write_fields(g.grid, grid_fields());
  j["optical"] = write_fields(g.optical, optical_fields());
  j["optical"]["grid"] = write_fields(g.optical.grid, grid_fields());
  j["cube"] = write_fields(g.cube, cube_fields());
  j["delivered"] = write_fields(g.delivered, delivered_fields());
  return j;
}

std::vector<std::string> write_mock(const std::string& dir, const MockProducts& p) {
  std::error_code ec;
  std::filesystem::create_directories(dir, ec);
  if (ec) throw InputError(dir, "cannot create the output folder: " + ec.message());
  const std::string name = p.truth.contains("parameters") ? p.truth["parameters"].value("name", "mock") : "mock";
  std::vector<HeaderCard> extra = {{"OBJECT", name, "invented mock galaxy", false},
                                   {"ORIGIN", "fulcrum synth", "noise and truth: see truth.json", false}};
  std::vector<std::string> written;
  auto img = [&](const std::string& file, const Image& im, const std::string& what) {
    auto cards = extra;
    cards.push_back({"BTYPE", what, "", false});
    write_image((std::filesystem::path(dir) / file).string(), im, cards);
    written.push_back(file);
  };
  if (p.delivered) {
    auto as_delivered = [&](const std::string& file, const Image& im, const std::string& what) {
      std::vector<TextCard> cards;
      for (const auto& c : extra) cards.push_back({c.name, c.value, c.comment, c.numeric});
      cards.push_back({"BTYPE", what, "", false});
      write_delivered_image((std::filesystem::path(dir) / file).string(), im,
                            p.delivered->summary.value("blank_value", -999.0), cards, p.delivered->history);
      written.push_back(file);
    };
    as_delivered("vel.fits", p.delivered->velocity, "velocity");
    as_delivered("vel_err.fits", p.delivered->velocity_error, "velocity error");
    as_delivered("mom0.fits", p.delivered->intensity, "integrated intensity");
    as_delivered("mom0_err.fits", p.delivered->intensity_error, "integrated intensity error");
  } else {
    img("vel.fits", p.velocity, "velocity");
    img("vel_err.fits", p.velocity_error, "velocity error");
    img("mom0.fits", p.intensity, "integrated intensity");
    img("mom0_err.fits", p.intensity_error, "integrated intensity error");
  }
  img("vel_model.fits", p.velocity_model, "velocity model (noise-free)");
  img("mom0_model.fits", p.intensity_model, "integrated intensity model (noise-free)");
  if (p.optical) img("opt.fits", *p.optical, "optical");
  if (p.cube) {
    write_cube((std::filesystem::path(dir) / "cube.fits").string(), *p.cube, p.cube_spectral_cards, extra);
    written.push_back("cube.fits");
  }
  write_text_file((std::filesystem::path(dir) / "truth.json").string(), p.truth.dump(2) + "\n");
  written.push_back("truth.json");
  return written;
}

}  // namespace fulcrum::synth
