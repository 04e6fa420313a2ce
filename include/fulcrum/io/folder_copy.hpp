// Copying a folder (e.g. a galaxy's results into a merged sample) so that a
// failure names the file and gives the system's reason: std::filesystem::copy
// reports a full disk as "Input/output error".
//
// copy_folder(from, to): `to` is made when missing (its parent must exist),
// then every entry of `from` below it: folders made, regular files (and links
// to files, followed) copied byte for byte with mode 0644, a link to a folder
// copied as a link; anything else (a socket, a device) is refused. Errors are
// InputError naming the file in `to` (or in `from` when it cannot be read).
#pragma once

#include <filesystem>

namespace fulcrum {

void copy_folder(const std::filesystem::path& from, const std::filesystem::path& to);

}  // namespace fulcrum
