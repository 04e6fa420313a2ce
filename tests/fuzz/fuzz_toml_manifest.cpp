// libFuzzer target: the TOML reading path used by manifests and mock files.
//
// Until the sample-manifest parser exists this fuzzes the generic toml++
// path every fulcrum TOML reader goes through: parse from memory (errors are
// toml::parse_error, which readers turn into InputError naming the line),
// then walk every node and read it back as the types a reader asks for
// (strings, integers, floats, booleans, arrays of tables), and print the
// document again. Anything other than a parse error is a finding.
#include <cstddef>
#include <cstdint>
#include <sstream>
#include <string_view>

#include <toml++/toml.h>

namespace {
void walk(const toml::node& n, int depth) {
  if (depth > 64) return;
  if (auto* t = n.as_table()) {
    for (auto&& [k, v] : *t) {
      (void)k.str();
      walk(v, depth + 1);
    }
  } else if (auto* a = n.as_array()) {
    for (auto&& v : *a) walk(v, depth + 1);
  } else {
    (void)n.value<std::string>();
    (void)n.value<double>();
    // value_exact, not value<int64_t>(): toml++'s value<integer>() on a
    // float node converts without a range check (UB for 2.5e30; found by
    // this target), so fulcrum's readers must ask for integers exactly.
    (void)n.value_exact<std::int64_t>();
    (void)n.value<bool>();
    (void)n.source().begin.line;
  }
}
}  // namespace

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
  std::string_view text(reinterpret_cast<const char*>(data), size);
  try {
    toml::table doc = toml::parse(text, std::string_view("fuzz.toml"));
    walk(doc, 0);
    if (auto* galaxies = doc["galaxy"].as_array())
      for (auto&& g : *galaxies)
        if (auto* t = g.as_table()) (void)(*t)["name"].value_or(std::string{});
    std::ostringstream os;
    os << doc;
  } catch (const toml::parse_error&) {
  }
  return 0;
}
