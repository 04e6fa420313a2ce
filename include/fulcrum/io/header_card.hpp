// FITS header cards written as text: one 80-character record per keyword,
// for building headers that wcslib parses (celestial grids, spectral axes).
//
// Layout (FITS Standard 4.0, sections 4.1-4.2, fixed format): the keyword
// left-justified in columns 1-8, "= " in columns 9-10; a string value in
// single quotes, padded with blanks to at least 8 characters, an embedded
// quote doubled; any other value (number, T/F) right-justified to column 30;
// then " / comment" when a comment is given; blanks to 80 columns (a longer
// card is cut at 80).
#pragma once

#include <string>

namespace fulcrum {

std::string header_card(const std::string& key, const std::string& value, bool quote,
                        const std::string& comment = "");

// A double written so that it reads back to the same double (17 significant
// digits, %.17G).
std::string header_number(double v);

}  // namespace fulcrum
