// Base64 text of bytes (RFC 4648, section 4: the standard alphabet with '='
// padding, no line breaks), for data URIs in the self-contained report.html.
#pragma once

#include <string>

namespace fulcrum::report {

std::string base64(const std::string& bytes);

}  // namespace fulcrum::report
