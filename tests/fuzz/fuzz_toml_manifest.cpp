// libFuzzer target: the sample manifest reader (pipeline/manifest).
//
// Feeds arbitrary bytes to parse_manifest, the function `fulcrum run` and
// `fulcrum merge` call on a manifest's text: toml++ parsing, then fulcrum's
// own checks (known keys, types, ranges, required keys, duplicate galaxy
// names, path resolution against the manifest folder). Every failure must be
// an InputError naming the manifest; anything else (a crash, a sanitizer
// report, toml::parse_error or another exception escaping) is a finding. A
// manifest that parses is then used as the runner uses it: every galaxy's
// seed is derived and the shard selection is taken.
//
// The generic toml++ walk stays as a second step on the same bytes, because
// the mock-galaxy reader (synth/) reads TOML through the same library:
// every node is read back as the types a reader asks for and the document
// is printed again.
#include <cstddef>
#include <cstdint>
#include <sstream>
#include <string>
#include <string_view>

#include <toml++/toml.h>

#include "fulcrum/core/error.hpp"
#include "fulcrum/pipeline/manifest.hpp"

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
  std::string text(reinterpret_cast<const char*>(data), size);

  // 1. The real manifest reader.
  try {
    auto m = fulcrum::pipeline::parse_manifest(text, "fuzz/sample.toml");
    std::uint64_t mix = 0;
    for (const auto& g : m.galaxies) mix ^= fulcrum::pipeline::galaxy_seed(m.seed, g);
    (void)mix;
    fulcrum::pipeline::Selection all;
    (void)fulcrum::pipeline::select_galaxies(m, all);
    fulcrum::pipeline::Selection half;
    half.shard_index = 2;
    half.shard_count = 2;
    (void)fulcrum::pipeline::select_galaxies(m, half);
  } catch (const fulcrum::InputError&) {
    // The expected outcome for a bad manifest.
  }

  // 2. The generic toml++ path (mock-galaxy files).
  try {
    toml::table doc = toml::parse(std::string_view(text), std::string_view("fuzz.toml"));
    walk(doc, 0);
    std::ostringstream os;
    os << doc;
  } catch (const toml::parse_error&) {
  }
  return 0;
}
