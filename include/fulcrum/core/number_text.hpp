// Numbers as text, for messages, tables, figures and reports: the one place
// that decides how a double is written.
//
//  * shortest_text: the shortest decimal that reads back to the same double
//    (std::to_chars); what machine-readable outputs (ECSV, JSON-like tables,
//    error messages that show a bad value) use, so nothing is lost.
//  * fixed_text: a fixed number of decimals ("%.*f"), for people; a result
//    that rounds to zero is written without a minus sign ("0.00", not
//    "-0.00").
//  * significant_text: a number of significant digits ("%.*g"), for people.
//
// Non-finite values are written "nan", "inf" and "-inf".
#pragma once

#include <string>

namespace fulcrum {

std::string shortest_text(double value);
std::string fixed_text(double value, int decimals);
std::string significant_text(double value, int digits);
// A probability with the precision its draws support: fixed_text, except
// "> 0.999" and "< 0.001" (for 3 decimals) where it would round to 1 or 0.
std::string probability_text(double p, int decimals);

}  // namespace fulcrum
