//! Regional spectral analysis: windows concentrated in a region (`cap`, `tapers`; arbitrary
//! regions in `polygon`, `region` and `concentration`), the
//! coupling of global into localised spectra (`coupling`), and localised multitaper spectra,
//! cross-spectra, correlation and admittance (`multitaper`). Works on coefficients (and on
//! transform grids internally for the windowed products); never reads or writes files.

pub mod cap;
pub mod concentration;
pub mod coupling;
pub mod degree_average;
pub mod edge_bands;
pub mod estimate;
pub mod multitaper;
pub mod polygon;
pub mod region;
pub mod region_spec;
pub mod tables;
pub mod tapers;

pub use cap::{cap_shannon_number, cap_tapers_at_pole, check_cap_radius, Taper};
pub use concentration::{concentration_matrix, region_tapers, LatitudeRows};
pub use coupling::{coupling_matrix, expected_localised_spectrum};
pub use degree_average::{degree_average, DegreeAverage};
pub use estimate::{estimate_windows, localised_spectrum_with_expected};
pub use multitaper::{
    localised_comparison, localised_spectrum, reliable_degrees, Estimate, LocalisedComparison,
    LocalisedSpectrum, TaperChoice,
};
pub use polygon::{SphericalPolygon, Vertex};
pub use region::{polygon_rows, MaskRegion, Region};
pub use region_spec::RegionSpec;
pub use tapers::{cap_taper_set, cap_taper_set_with_progress, TaperSet, DEFAULT_MIN_CONCENTRATION};
