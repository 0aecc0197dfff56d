//! What each named input or step holds once it has run.

use crate::coeffs::Coefficients;
use crate::io::grid::read::UserGrid;
use crate::observe::points::PointSet;
use crate::regional::{LocalisedComparison, LocalisedSpectrum, TaperSet};
use crate::spectral::{Comparison, Spectrum};

/// A point set with what the values mean.
#[derive(Debug, Clone)]
pub struct Points {
    pub set: PointSet,
    /// "potential" (m² s⁻²) or "value".
    pub quantity: String,
    pub units: String,
}

/// A computed or loaded product.
#[derive(Debug, Clone)]
pub enum Product {
    Points(Points),
    Grid(Box<UserGrid>),
    Model(Coefficients),
    Spectrum(Box<Spectrum>),
    Comparison(Box<Comparison>),
    /// Names of the map variables written.
    Maps(Vec<String>),
    /// RMS of the residuals.
    Residuals {
        rms: f64,
    },
    Windows(Box<TaperSet>),
    LocalisedSpectrum(Box<LocalisedSpectrum>),
    LocalisedComparison(Box<LocalisedComparison>),
}

impl Product {
    pub fn as_points(&self) -> Option<&Points> {
        match self {
            Product::Points(p) => Some(p),
            _ => None,
        }
    }
    pub fn as_model(&self) -> Option<&Coefficients> {
        match self {
            Product::Model(m) => Some(m),
            _ => None,
        }
    }
    pub fn as_grid(&self) -> Option<&UserGrid> {
        match self {
            Product::Grid(g) => Some(g),
            _ => None,
        }
    }
}
