// Collecting a split's pixels (split/pixel_set.hpp): the offsets streamed a
// band of rows at a time from a PixelOffsets that holds only the grid's
// geometry give the same PixelSet, bit for bit, as offsets held for every
// pixel; one rms is kept as a uniform variance, which the engines and the
// direct sums read as if every pixel carried it (the same bits). The
// reference is the project's own earlier path (held offsets, a variance per
// pixel): these are identity checks, not checks against an outside source.
#include <catch2/catch.hpp>

#include <cmath>
#include <limits>

#include "fulcrum/split/pixel_set.hpp"
#include "fulcrum/split/projection_engine.hpp"
#include "split_mock.hpp"

using namespace fulcrum;
using namespace fulcrum::split;

namespace {
void require_same_set(const PixelSet& a, const PixelSet& b) {
  REQUIRE(a.size() == b.size());
  CHECK(a.east == b.east);
  CHECK(a.north == b.north);
  CHECK(a.value == b.value);
  CHECK(a.variance == b.variance);
  CHECK(a.uniform_variance == b.uniform_variance);
  CHECK(a.max_radius == b.max_radius);
  CHECK(a.jacobian == b.jacobian);
  REQUIRE(a.tiles.size() == b.tiles.size());
  for (std::size_t t = 0; t < a.tiles.size(); ++t) {
    CHECK(a.tiles[t].begin == b.tiles[t].begin);
    CHECK(a.tiles[t].end == b.tiles[t].end);
    CHECK(a.tiles[t].east == b.tiles[t].east);
    CHECK(a.tiles[t].north == b.tiles[t].north);
    CHECK(a.tiles[t].radius == b.tiles[t].radius);
    CHECK(a.tiles[t].sum_value == b.tiles[t].sum_value);
    CHECK(a.tiles[t].sum_variance == b.tiles[t].sum_variance);
  }
}
}  // namespace

TEST_CASE("pixels collected from streamed offsets equal those from held offsets", "[split][pixels]") {
  // A grid whose sides are not multiples of the 32-pixel tiles and whose
  // size crosses wcslib's chunks of 4096 pixels, rotated and flipped, with
  // blank pixels and an error map with holes, with and without an aperture.
  test::TinyMock m;
  m.nx = 101;
  m.ny = 77;
  m.rotation_deg = 25.0;
  m.flip = true;
  m.rms = 0.02;
  test::TinyMockMaps t = test::make_tiny_mock(m);
  for (std::size_t i = 0; i < t.map.size(); i += 37) t.map.data[i] = std::numeric_limits<double>::quiet_NaN();
  for (std::size_t i = 5; i < t.error.size(); i += 53) t.error.data[i] = i % 2 ? 0.0 : std::numeric_limits<double>::quiet_NaN();
  const WorldCoord ref{150.0001, 19.9998};
  const PixelOffsets held(t.map, ref);
  const PixelOffsets geometry(t.map, ref, PixelOffsets::Holds::geometry_only);
  CHECK(held.holds_pixels());
  CHECK_FALSE(geometry.holds_pixels());
  CHECK(geometry.east().empty());
  CHECK(geometry.jacobian() == held.jacobian());
  CHECK(geometry.max_jacobian_variation() == held.max_jacobian_variation());
  const SkyEllipse ap{{0.4, -0.3}, 70.0 * degrees, 12.0, 0.6};
  for (const std::optional<SkyEllipse>& aperture : {std::optional<SkyEllipse>{}, std::optional<SkyEllipse>{ap}})
    for (const NoiseSpec& noise : {NoiseSpec{}, NoiseSpec{&t.error, 0.0}, NoiseSpec{nullptr, 0.02}}) {
      const PixelSet a = collect_pixels(t.map, held, aperture, noise);
      const PixelSet b = collect_pixels(t.map, geometry, aperture, noise);
      INFO("aperture " << aperture.has_value() << ", error map " << (noise.error_map != nullptr) << ", rms "
                       << noise.rms);
      require_same_set(a, b);
      if (aperture) CHECK(a.size() < 0.6 * t.map.size());
    }
}

TEST_CASE("one rms is a uniform variance that sums like a variance per pixel", "[split][pixels]") {
  test::TinyMock m;
  m.nx = 70;
  m.ny = 45;
  m.rotation_deg = -40.0;
  m.rms = 0.02;
  const test::TinyMockMaps t = test::make_tiny_mock(m);
  const PixelOffsets off(t.map, m.centre);
  const PixelSet uniform = collect_pixels(t.map, off, std::nullopt, NoiseSpec{nullptr, 0.02});
  CHECK(uniform.variance.empty());
  CHECK(uniform.uniform_variance == 0.02 * 0.02);
  CHECK(uniform.has_variance());
  CHECK(uniform.variance_at(17) == 0.02 * 0.02);
  // The same pixels with the rms given as an error map: a variance per pixel.
  const PixelSet per_pixel = collect_pixels(t.map, off, std::nullopt, NoiseSpec{&t.error, 0.0});
  REQUIRE(per_pixel.variance.size() == per_pixel.size());
  CHECK(per_pixel.uniform_variance == 0.0);
  const PixelSet none = collect_pixels(t.map, off, std::nullopt, NoiseSpec{});
  CHECK_FALSE(none.has_variance());
  for (double tail : {0.0, 33.0, 200.0}) {
    for (const EngineOptions& eo : {EngineOptions{}, EngineOptions{0.0, true, -1.0, 1.5}}) {
      const ProjectionEngine eu(uniform, tail * degrees, eo), ep(per_pixel, tail * degrees, eo);
      REQUIRE(eu.channels() == 2);
      CHECK(eu.total(1) == ep.total(1));
      for (double s : {-3.0, -0.7, 0.0, 0.4, 1.2, 6.0}) {
        const HalfSums hu = eu.halves(s), hp = ep.halves(s);
        CHECK(hu.trailing_var == hp.trailing_var);
        CHECK(hu.leading_var == hp.leading_var);
        CHECK(hu.trailing == hp.trailing);
      }
    }
    const SkyOffset c{0.3, -0.5};
    const HalfSums du = direct_halves(uniform, tail * degrees, c), dp = direct_halves(per_pixel, tail * degrees, c);
    CHECK(du.trailing_var == dp.trailing_var);
    CHECK(du.leading_var == dp.leading_var);
    CHECK(direct_trailing(uniform, tail * degrees, 0.2, 1) == direct_trailing(per_pixel, tail * degrees, 0.2, 1));
    CHECK(direct_trailing(none, tail * degrees, 0.2, 1) == 0.0);
    CHECK(ProjectionEngine(none, tail * degrees).channels() == 1);
  }
}
