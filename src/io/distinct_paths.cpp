// Output paths that would overwrite an input (io/distinct_paths.hpp).
#include "fulcrum/io/distinct_paths.hpp"

#include <algorithm>
#include <filesystem>

#include "fulcrum/core/error.hpp"
#include "fulcrum/core/settings_check.hpp"

namespace fulcrum {

namespace {

std::filesystem::path resolved(const std::string& p) {
  std::error_code ec;
  auto r = std::filesystem::weakly_canonical(std::filesystem::path(p), ec);
  return ec ? std::filesystem::absolute(p).lexically_normal() : r;
}

}  // namespace

void check_distinct_paths(const std::vector<std::pair<std::string, std::string>>& inputs,
                          const std::vector<std::pair<std::string, std::string>>& outputs) {
  for (std::size_t i = 0; i < outputs.size(); ++i) {
    const auto& [out_setting, out_path] = outputs[i];
    if (out_path.empty()) continue;
    const auto out = resolved(out_path);
    for (const auto& [in_setting, in_path] : inputs)
      if (!in_path.empty() && resolved(in_path) == out)
        throw InputError(out_path, setting_ref(out_setting) + " names the input " + setting_ref(in_setting) +
                                       "; an output must not overwrite an input (not even with " +
                                       setting_ref("overwrite") + ")");
    for (std::size_t j = 0; j < i; ++j)
      if (!outputs[j].second.empty() && resolved(outputs[j].second) == out)
        throw InputError(out_path, setting_ref(out_setting) + " names the same file as " +
                                       setting_ref(outputs[j].first) + "; give each output its own file");
  }
}

void check_inputs_outside_folder(const std::vector<std::pair<std::string, std::string>>& inputs,
                                 const std::pair<std::string, std::string>& folder) {
  const auto& [out_setting, out_path] = folder;
  if (out_path.empty()) return;
  auto out = resolved(out_path);
  if (!out.has_filename()) out = out.parent_path();  // a trailing '/'
  for (const auto& [in_setting, in_path] : inputs) {
    if (in_path.empty()) continue;
    const auto in = resolved(in_path);
    // `in` equal to the folder or below it.
    auto [o, i] = std::mismatch(out.begin(), out.end(), in.begin(), in.end());
    if (o == out.end())
      throw InputError(in_path, "the input " + setting_ref(in_setting) + " lies in the output folder " +
                                    setting_ref(out_setting) + ", which a run replaces whole; move the input or choose "
                                    "another output folder");
  }
}

}  // namespace fulcrum
