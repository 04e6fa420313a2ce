// Reading and writing FITS images and cubes (CFITSIO).
//
// read_image accepts a 2-D image, or a 3-D/4-D array whose extra axes are
// degenerate (length 1, e.g. a single channel and a Stokes axis). read_cube
// accepts 3-D, or 4-D with a degenerate Stokes axis. Both read the primary
// HDU, or the first image HDU that has data. BSCALE/BZERO are applied, BLANK
// and NaN become NaN, BMAJ/BMIN (degrees) and BPA are read into the beam, and
// BUNIT into the unit. Every failure is an InputError naming the file.
//
// write_image writes a 2-D float64 image with the image's WCS, beam and unit,
// plus extra cards; the file is written to a temporary name and renamed into
// place, so a failure never leaves a half-written file.
#pragma once

#include <cstddef>
#include <optional>
#include <string>
#include <utility>
#include <vector>

#include "fulcrum/io/image.hpp"

namespace fulcrum {

// The largest image read by default: 200 million pixels (1.6 GB as doubles).
inline constexpr std::size_t kDefaultMaxPixels = 200'000'000;
// The limit a default ReadOptions takes: set_default_max_pixels() (the global
// --max-pixels option) if called, else the environment variable
// FULCRUM_MAX_PIXELS (a positive integer), else kDefaultMaxPixels.
std::size_t default_max_pixels();
void set_default_max_pixels(std::size_t n);

struct ReadOptions {
  // Refuse images with more pixels than this (protects memory); 0 = no limit.
  // The check happens on the header, before any pixel memory is allocated.
  std::size_t max_pixels = default_max_pixels();
};

// A keyword to add to a written header: name, value (a number or a string),
// comment.
struct HeaderCard {
  std::string name;
  std::string value;  // written as a string unless `numeric` is true
  std::string comment;
  bool numeric = false;
};

Image read_image(const std::string& path, const ReadOptions& options = {});
// The axis lengths (NAXIS1, NAXIS2, ...) of the image read_image or read_cube
// would read, from the header only: no pixel is read, so it is cheap even
// for a large cube. Throws InputError naming the file.
std::vector<long> fits_image_axes(const std::string& path);
Cube read_cube(const std::string& path, const ReadOptions& options = {});

// Read an image from a FITS file held in memory (for fuzzing and tests);
// `name` is used in messages.
Image read_image_from_memory(const void* bytes, std::size_t size, const std::string& name,
                             const ReadOptions& options = {});

void write_image(const std::string& path, const Image& image,
                 const std::vector<HeaderCard>& extra = {});
// Write a cube with the celestial WCS of `cube` and the spectral-axis cards
// given in `spectral_cards` (80-char records), e.g. copied from the input.
void write_cube(const std::string& path, const Cube& cube, const std::string& spectral_cards,
                const std::vector<HeaderCard>& extra = {});

// The value of a header keyword in a header string, if present (trimmed,
// quotes removed for strings).
std::optional<std::string> header_value(const std::string& header_cards, const std::string& key);

}  // namespace fulcrum
