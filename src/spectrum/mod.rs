//! The exact spectrum of H0, grouped into degenerate levels.
//! Start from [`unperturbed_levels`]. Knows nothing of perturbation orders.
#![deny(clippy::float_arithmetic)]

use crate::exact::RatFunc;
use crate::linalg::SparseVec;
use crate::model::Model;

/// One exact eigenvalue of H0 with its eigenspace.
#[derive(Clone, Debug)]
pub struct Level {
    /// The exact eigenvalue.
    pub energy: RatFunc,
    /// A basis of the eigenspace in the product basis; unit vectors when H0 is diagonal.
    pub states: Vec<SparseVec<RatFunc>>,
}

impl Level {
    /// Dimension of the eigenspace.
    pub fn degeneracy(&self) -> usize {
        self.states.len()
    }
}

/// The unperturbed spectrum, levels in ascending order where the order is known.
#[derive(Clone, Debug)]
pub struct Spectrum {
    /// The levels.
    pub levels: Vec<Level>,
    /// Whether H0 is diagonal in the product basis (then every state is a product state).
    pub diagonal: bool,
}

/// Why the spectrum could not be found exactly.
#[derive(Clone, Debug, PartialEq, Eq)]
pub enum SpectrumError {
    /// H0 is neither diagonal, numeric, nor a sum of commuting symbol-times-numeric terms.
    Unsupported(String),
}

impl std::fmt::Display for SpectrumError {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        match self {
            SpectrumError::Unsupported(why) => write!(f, "{why}"),
        }
    }
}

/// Every exact eigenvalue of H0 with its eigenspace.
pub fn unperturbed_levels(model: &Model) -> Result<Spectrum, SpectrumError> {
    let _ = model;
    unimplemented!()
}
