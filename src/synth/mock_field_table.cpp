// The tables of mock parameters (see mock_field_table.hpp). Units: degrees,
// arcsec, km/s, Jy km/s, Jy/beam km/s, Hz, adu, as each line says.
#include "fulcrum/synth/mock_field_table.hpp"

namespace fulcrum::synth {

const std::vector<Field<MockGalaxy>>& galaxy_fields() {
  using G = MockGalaxy;
  static const std::vector<Field<G>> f = {
      {"name", &G::name, "name of the mock galaxy (invented)"},
      {"seed", &G::seed, "seed of the random generator"},
      {"ra_deg", &G::ra_deg, "right ascension of the kinematic centre, deg"},
      {"dec_deg", &G::dec_deg, "declination of the kinematic centre, deg"},
      {"pa_deg", &G::pa_deg, "kinematic position angle (receding half of the major axis), deg N through E"},
      {"inc_deg", &G::inc_deg, "inclination of the disc, deg (0 = face on)"},
      {"vsys_kms", &G::vsys_kms, "systemic velocity, km/s"},
      {"vflat_kms", &G::vflat_kms, "flat rotation speed of vrot = vflat (2/pi) atan(R/r_turn), km/s"},
      {"r_turn_arcsec", &G::r_turn_arcsec, "turnover radius of the rotation curve, arcsec"},
      {"total_flux_jykms", &G::total_flux_jykms, "line flux of disc plus tail before noise, Jy km/s"},
      {"scale_length_arcsec", &G::scale_length_arcsec, "exponential scale length of the gas disc, arcsec"},
      {"disc_radius_arcsec", &G::disc_radius_arcsec, "outer truncation radius of the unstripped gas disc, arcsec"},
      {"leading_excess", &G::leading_excess, "amplitude e of the lopsided term 1 + e cos(phi - phi_lead), -1..1"},
      {"tail_pa_deg", &G::tail_pa_deg, "position angle from the centre towards the tail, deg"},
      {"tail_pa_err_deg", &G::tail_pa_err_deg, "uncertainty of the tail PA quoted to the analysis, deg"},
      {"tail_flux_fraction", &G::tail_flux_fraction, "fraction of the total flux in the tail, 0..1"},
      {"tail_length_arcsec", &G::tail_length_arcsec, "length of the tail from the centre, arcsec"},
      {"tail_width_arcsec", &G::tail_width_arcsec, "Gaussian sigma of the tail across its axis, arcsec"},
      {"stripped_fraction", &G::stripped_fraction, "fraction of the disc gas removed, outer disc first, 0..1"},
      {"bmaj_arcsec", &G::bmaj_arcsec, "beam major axis FWHM, arcsec"},
      {"bmin_arcsec", &G::bmin_arcsec, "beam minor axis FWHM, arcsec"},
      {"bpa_deg", &G::bpa_deg, "beam position angle, deg"},
      {"intensity_rms", &G::intensity_rms, "rms of the beam-correlated noise of the line map, Jy/beam km/s"},
      {"velocity_noise_kms", &G::velocity_noise_kms, "velocity error at the masking threshold (scales as 1/SNR), km/s"},
      {"velocity_noise_floor_kms", &G::velocity_noise_floor_kms, "smallest velocity error, km/s"},
      {"mask_snr", &G::mask_snr, "velocities are kept where the line map SNR is at least this"},
      {"hole_fraction", &G::hole_fraction, "fraction of kept velocity pixels blanked in round holes, 0..0.9"},
      {"hole_radius_arcsec", &G::hole_radius_arcsec, "radius of each hole, arcsec (<= 0: the beam FWHM)"},
      {"distance_mpc", &G::distance_mpc, "distance, Mpc (metadata for the analysis)"},
      {"description", &G::description, "what this mock is meant to show"},
      {"expected_verdict", &G::expected_verdict, "verdict the analysis should reach (empty: none)"},
  };
  return f;
}

const std::vector<Field<GridSpec>>& grid_fields() {
  using S = GridSpec;
  static const std::vector<Field<S>> f = {
      {"nx", &S::nx, "pixels along x"},
      {"ny", &S::ny, "pixels along y"},
      {"pixel_arcsec", &S::pixel_arcsec, "pixel size, arcsec"},
      {"rotation_deg", &S::rotation_deg, "position angle of the +y pixel axis, deg"},
      {"flip", &S::flip, "east to the right when north is up"},
      {"projection", &S::projection, "WCS projection code (SIN, TAN, ...)"},
      {"centre_east_arcsec", &S::centre_east_arcsec, "east offset of the grid centre from the galaxy, arcsec"},
      {"centre_north_arcsec", &S::centre_north_arcsec, "north offset of the grid centre from the galaxy, arcsec"},
  };
  return f;
}

const std::vector<Field<OpticalSpec>>& optical_fields() {
  using S = OpticalSpec;
  static const std::vector<Field<S>> f = {
      {"enabled", &S::enabled, "make an optical image"},
      {"offset_east_arcsec", &S::offset_east_arcsec, "photometric minus kinematic centre, east, arcsec"},
      {"offset_north_arcsec", &S::offset_north_arcsec, "photometric minus kinematic centre, north, arcsec"},
      {"sersic_n", &S::sersic_n, "Sersic index"},
      {"re_arcsec", &S::re_arcsec, "half-light radius (semi-major axis), arcsec"},
      {"q", &S::q, "axis ratio b/a (< 0: cos of the disc inclination)"},
      {"pa_deg", &S::pa_deg, "major-axis PA of the stellar light, deg (< 0: the kinematic PA)"},
      {"total_counts", &S::total_counts, "total counts of the galaxy, adu"},
      {"sky_level", &S::sky_level, "flat sky level, adu per pixel"},
      {"noise_rms", &S::noise_rms, "white noise per pixel, adu"},
      {"psf_fwhm_arcsec", &S::psf_fwhm_arcsec, "Gaussian PSF FWHM, arcsec"},
      {"n_stars", &S::n_stars, "number of foreground stars"},
      {"star_counts", &S::star_counts, "mean counts per star, adu"},
  };
  return f;
}

const std::vector<Field<CubeSpec>>& cube_fields() {
  using S = CubeSpec;
  static const std::vector<Field<S>> f = {
      {"enabled", &S::enabled, "make a spectral-line cube"},
      {"n_channels", &S::n_channels, "number of channels"},
      {"channel_width_kms", &S::channel_width_kms, "channel width, km/s"},
      {"dispersion_kms", &S::dispersion_kms, "intrinsic Gaussian line dispersion, km/s"},
      {"noise_rms", &S::noise_rms, "beam-correlated noise per channel, Jy/beam"},
      {"spectral_type", &S::spectral_type, "spectral axis: VRAD, VOPT or FREQ"},
      {"rest_frequency_hz", &S::rest_frequency_hz, "rest frequency of the line, Hz"},
      {"reverse_channels", &S::reverse_channels, "channels in decreasing velocity"},
  };
  return f;
}

const std::vector<Field<DeliveredSpec>>& delivered_fields() {
  using S = DeliveredSpec;
  static const std::vector<Field<S>> f = {
      {"enabled", &S::enabled, "write the line maps as delivered: BLANK on floats, bad errors, scattered pixels"},
      {"blank_value", &S::blank_value, "value of missing pixels, declared by a BLANK card"},
      {"field_radius_fraction", &S::field_radius_fraction,
       "observed field radius over the smaller grid half-size; blank beyond"},
      {"failed_fit_fraction", &S::failed_fit_fraction,
       "fraction of the galaxy's velocity pixels whose error is +inf or 1e38"},
      {"failed_fit_pixels_outside", &S::failed_fit_pixels_outside,
       "pixels outside the galaxy with a blank velocity and an error of +inf or 1e38"},
      {"scattered_pixels", &S::scattered_pixels, "isolated single pixels with wild velocities outside the galaxy"},
      {"scattered_velocity_range_kms", &S::scattered_velocity_range_kms,
       "their velocities: uniform within vsys +- this, km/s"},
      {"history_cards", &S::history_cards, "number of HISTORY cards"},
  };
  return f;
}

}  // namespace fulcrum::synth
