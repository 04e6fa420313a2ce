// libFuzzer target: the FITS loading path from memory (header + data).
//
// Feeds arbitrary bytes to read_image_from_memory, which goes through CFITSIO
// (header parsing, BITPIX/NAXIS/BSCALE/BLANK handling, pixel reading), the
// beam and unit keywords, and wcslib (wcspih, wcsfix, wcssub, wcsset). Every
// failure must be an InputError; anything else (a crash, a sanitizer report,
// another exception type escaping) is a finding. On success the WCS is
// exercised at the image corners, as every later stage does.
//
// The pixel limit is kept small so that a header announcing a huge image is
// refused instead of exhausting the fuzzer's memory (that refusal is itself
// under test).
#include <cstddef>
#include <cstdint>

#include "fulcrum/core/error.hpp"
#include "fulcrum/io/fits_image.hpp"

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
  fulcrum::ReadOptions options;
  options.max_pixels = 1u << 20;
  try {
    fulcrum::Image img = fulcrum::read_image_from_memory(data, size, "fuzz.fits", options);
    if (img.nx > 0 && img.ny > 0 && img.wcs.valid()) {
      const double xs[2] = {0.0, img.nx - 1.0};
      const double ys[2] = {0.0, img.ny - 1.0};
      for (double x : xs)
        for (double y : ys) {
          try {
            auto w = img.wcs.pixel_to_world({x, y});
            (void)img.wcs.world_to_pixel(w);
          } catch (const fulcrum::InputError&) {
          }
        }
      (void)img.wcs.header_cards();
      (void)img.finite_count();
    }
  } catch (const fulcrum::InputError&) {
    // The expected outcome for bad input.
  }
  return 0;
}
