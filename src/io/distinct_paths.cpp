// Output paths that would overwrite an input (io/distinct_paths.hpp).
#include "fulcrum/io/distinct_paths.hpp"

#include <algorithm>
#include <filesystem>

#include "fulcrum/core/error.hpp"
#include "fulcrum/core/settings_check.hpp"

namespace fulcrum {

std::filesystem::path comparable_path(const std::filesystem::path& p) {
  std::error_code ec;
  std::filesystem::path c = std::filesystem::weakly_canonical(std::filesystem::absolute(p, ec), ec);
  if (ec) c = std::filesystem::absolute(p, ec);
  c = c.lexically_normal();
  if (!c.has_filename() && c != c.root_path()) c = c.parent_path();  // a trailing '/'
  return c;
}

bool path_lies_in(const std::filesystem::path& inner, const std::filesystem::path& outer) {
  return std::mismatch(outer.begin(), outer.end(), inner.begin(), inner.end()).first == outer.end();
}

void check_distinct_paths(const std::vector<std::pair<std::string, std::string>>& inputs,
                          const std::vector<std::pair<std::string, std::string>>& outputs) {
  for (std::size_t i = 0; i < outputs.size(); ++i) {
    const auto& [out_setting, out_path] = outputs[i];
    if (out_path.empty()) continue;
    const auto out = comparable_path(out_path);
    for (const auto& [in_setting, in_path] : inputs)
      if (!in_path.empty() && comparable_path(in_path) == out)
        throw InputError(out_path, setting_ref(out_setting) + " names the input " + setting_ref(in_setting) +
                                       "; an output must not overwrite an input (not even with " +
                                       setting_ref("overwrite") + ")");
    for (std::size_t j = 0; j < i; ++j)
      if (!outputs[j].second.empty() && comparable_path(outputs[j].second) == out)
        throw InputError(out_path, setting_ref(out_setting) + " names the same file as " +
                                       setting_ref(outputs[j].first) + "; give each output its own file");
  }
}

void check_inputs_outside_folder(const std::vector<std::pair<std::string, std::string>>& inputs,
                                 const std::pair<std::string, std::string>& folder) {
  const auto& [out_setting, out_path] = folder;
  if (out_path.empty()) return;
  const auto out = comparable_path(out_path);
  for (const auto& [in_setting, in_path] : inputs) {
    if (in_path.empty()) continue;
    if (path_lies_in(comparable_path(in_path), out))
      throw InputError(in_path, "the input " + setting_ref(in_setting) + " lies in the output folder " +
                                    setting_ref(out_setting) + ", which a run replaces whole; move the input or choose "
                                    "another output folder");
  }
}

}  // namespace fulcrum
