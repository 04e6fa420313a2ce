// A sky image from pixels already in memory and its FITS header cards (an
// array and header handed over by a script, not a file), checked as
// read_image checks a file so that the same problem gets the same message.
//
// `pixels` are the values in FITS order, x fastest: value(x, y) =
// pixels[x + nx * y] (a C-ordered array of shape (ny, nx), or (..., 1, ny,
// nx) with degenerate extra axes). `axes` are the FITS axis lengths, NAXIS1
// first. `header_cards` are 80-character cards without separators (END and
// blank padding allowed); the celestial WCS, beam (BMAJ/BMIN/BPA) and BUNIT
// are read from them as from a file's header. NAXISn cards, when present,
// must agree with `axes`. The pixels are taken as physical values: BSCALE
// and BZERO are not applied again, while NaN, infinities, absurd values and a
// BLANK value become missing (NaN) as in a float file (io/missing_values.hpp).
// `name` stands for the file name in messages ("velocity array"). Every
// problem is an InputError naming it.
#pragma once

#include <string>
#include <vector>

#include "fulcrum/io/fits_image.hpp"

namespace fulcrum {

Image image_from_memory(std::vector<double> pixels, const std::vector<long>& axes,
                        const std::string& header_cards, const std::string& name,
                        const ReadOptions& options = {});

}  // namespace fulcrum
