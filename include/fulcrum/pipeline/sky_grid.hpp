// Resampling a map onto a regular grid of sky offsets for the figures.
//
// The figure grid has cells of equal size in (east, north) arcsec about a
// centre; each cell takes the value of the input pixel that contains the
// cell centre (nearest pixel, through the WCS: the world position of the
// offset, then world_to_pixel). This is for display only: no measurement
// reads the resampled grid. Works for any rotated, flipped or sheared grid.
#pragma once

#include "fulcrum/io/image.hpp"
#include "fulcrum/report/value_grid.hpp"
#include "fulcrum/sky/offset_frame.hpp"

namespace fulcrum::pipeline {

// n x n cells covering [-half, half] arcsec in east and north about `centre`.
report::Grid sky_grid(const Image& image, WorldCoord centre, double half_width_arcsec, int n);

// Half-width (arcsec) that shows every finite pixel of `image` about `centre`
// (capped at `cap` when cap > 0).
double finite_extent_arcsec(const Image& image, WorldCoord centre, double cap = 0.0);

}  // namespace fulcrum::pipeline
