// Missing pixels as real data products mark them, and how many there were.
//
// A pixel is missing (stored as NaN) when it is
//  * NaN, the FITS standard's blank for floating-point data (FITS 4.0,
//    section 5.3) -- not worth a warning;
//  * equal to the header's BLANK value on a floating-point image. The FITS
//    standard defines BLANK for integer data only (section 4.4.2.5), so a
//    strict reader ignores it; honouring it on floats is a deviation taken
//    from common practice (pipelines write BLANK = -999 on float maps and
//    mean it). The physical value BZERO + BSCALE * BLANK is compared exactly
//    (float32 -999 is exactly -999.0 in double), never within a tolerance;
//  * infinite, or absurd: |v| >= 1e30 (kAbsurdValue), which no velocity,
//    brightness or error in any unit fulcrum reads can be; fitting codes
//    write 1e38 or FLT_MAX where a fit failed.
// Integer images keep CFITSIO's own BLANK handling (it is standard there).
// Pixels that are missing only by their role (a non-positive error) are the
// business of whoever uses the map as an error map.
#pragma once

#include <cstddef>
#include <optional>
#include <string>
#include <vector>

#include "fulcrum/io/fits_image.hpp"

namespace fulcrum {

inline constexpr double kAbsurdValue = 1e30;

struct MissingValueCounts {
  std::optional<double> blank_value;  // BLANK on a float image, physical units
  std::size_t blank = 0;              // pixels equal to it
  std::size_t not_a_number = 0;       // NaN in the file (or integer BLANK)
  std::size_t infinite = 0;
  std::size_t absurd = 0;             // finite, |v| >= kAbsurdValue
  std::size_t total() const { return blank + not_a_number + infinite + absurd; }
};

// Replace missing values of `data` (as read, BSCALE/BZERO applied, integer
// BLANK already NaN) by NaN and count them. `bitpix` is the file's BITPIX.
MissingValueCounts mark_missing_values(std::vector<double>& data, const std::string& header,
                                       int bitpix);

// One warning line for what is not plain NaN (BLANK on floats, infinities,
// absurd values), naming the file; nothing when there were none.
void warn_missing_values(const MissingValueCounts& counts, const std::string& name);

// read_image that also returns the counts (`inspect` reports them).
Image read_image_counted(const std::string& path, MissingValueCounts& counts,
                         const ReadOptions& options = {});

}  // namespace fulcrum
