//! The typed model: spaces, their product basis, exact operators, and the perturbation problem.
//! Start from [`Model`]. Built by `lower` from source text or directly through the constructors
//! here; knows nothing of source text, spans or pest.
#![deny(clippy::float_arithmetic)]

mod space;

pub use space::{Space, SpaceKind, SpinOp};

use crate::exact::{Field, RatFunc};
use crate::linalg::SparseMatrix;

/// An exact operator on the product space, with entries that may depend on the parameters.
pub type Operator = SparseMatrix<RatFunc>;

/// The largest product space a model may declare.
pub const MAX_DIMENSION: usize = 20_000;

/// The largest order in lambda that a model may ask for and the engine accepts.
pub const MAX_ORDER: u32 = 1000;

/// A real symbol declared with `param`.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Param {
    /// Its name as written in the model.
    pub name: String,
    /// Declared `> 0`.
    pub positive: bool,
}

/// The tensor product of the declared spaces, first space's index varying slowest.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Basis {
    spaces: Vec<Space>,
    strides: Vec<usize>,
    dimension: usize,
}

impl Basis {
    /// The product basis of `spaces`; `None` when it has more than [`MAX_DIMENSION`] states
    /// (or overflows).
    pub fn new(spaces: Vec<Space>) -> Option<Basis> {
        let mut dimension: usize = 1;
        for space in &spaces {
            dimension = dimension.checked_mul(space.dimension())?;
            if dimension > MAX_DIMENSION {
                return None;
            }
        }
        let mut strides = vec![1; spaces.len()];
        for k in (0..spaces.len().saturating_sub(1)).rev() {
            strides[k] = strides[k + 1] * spaces[k + 1].dimension();
        }
        Some(Basis { spaces, strides, dimension })
    }
    /// The declared spaces in order.
    pub fn spaces(&self) -> &[Space] {
        &self.spaces
    }
    /// Number of product states.
    pub fn dimension(&self) -> usize {
        self.dimension
    }
    /// The factor indices of product state `state_idx`.
    pub fn factors(&self, state_idx: usize) -> Vec<usize> {
        self.strides
            .iter()
            .zip(&self.spaces)
            .map(|(stride, space)| (state_idx / stride) % space.dimension())
            .collect()
    }
    /// The ket label of product state `state_idx`: `|a, b, c>`.
    pub fn ket_label(&self, state_idx: usize) -> String {
        let labels: Vec<String> = self
            .factors(state_idx)
            .iter()
            .zip(&self.spaces)
            .map(|(local, space)| space.state_label(*local))
            .collect();
        format!("|{}>", labels.join(", "))
    }
    /// Embeds an operator on factor `space_idx` into the product space (identity elsewhere).
    pub fn embed(&self, space_idx: usize, local: &Operator) -> Operator {
        let mut acc = Operator::identity(1);
        for (k, space) in self.spaces.iter().enumerate() {
            let factor =
                if k == space_idx { local.clone() } else { Operator::identity(space.dimension()) };
            acc = acc.kron(&factor);
        }
        acc
    }
    /// The identity on the product space.
    pub fn identity(&self) -> Operator {
        Operator::identity(self.dimension)
    }
}

/// A perturbation problem `H(lambda) = H0 + lambda V1 + lambda^2 V2 + ...` on a product basis.
///
/// Invariants (checked by [`Model::new`]): every operator is square of the basis dimension and
/// Hermitian, and there is at least one perturbation term.
#[derive(Clone, Debug)]
pub struct Model {
    params: Vec<Param>,
    basis: Basis,
    h0: Operator,
    perturbations: Vec<Operator>,
    focus: Vec<Vec<RatFunc>>,
    order: Option<u32>,
}

/// Why a [`Model`] could not be built from its parts.
#[derive(Clone, Debug, PartialEq, Eq)]
pub enum ModelError {
    /// An operator is not Hermitian; `term` is 0 for H0 and k for Vk; the first offending pair of
    /// product states is given.
    NotHermitian {
        /// 0 for H0, k for Vk.
        term: usize,
        /// Row index of the first offending entry.
        row: usize,
        /// Column index of the first offending entry.
        col: usize,
    },
    /// An operator has the wrong size.
    WrongDimension {
        /// 0 for H0, k for Vk.
        term: usize,
    },
    /// No perturbation term was given.
    MissingPerturbation,
}

impl Model {
    /// Checks and assembles a model. `perturbations[k]` enters at `lambda^(k+1)`.
    pub fn new(
        params: Vec<Param>,
        basis: Basis,
        h0: Operator,
        perturbations: Vec<Operator>,
        focus: Vec<Vec<RatFunc>>,
        order: Option<u32>,
    ) -> Result<Model, ModelError> {
        if perturbations.is_empty() {
            return Err(ModelError::MissingPerturbation);
        }
        let n = basis.dimension();
        for (term, op) in std::iter::once(&h0).chain(&perturbations).enumerate() {
            if op.n_rows() != n || op.n_cols() != n {
                return Err(ModelError::WrongDimension { term });
            }
            if let Some((row, col)) = op.first_non_hermitian() {
                return Err(ModelError::NotHermitian { term, row, col });
            }
        }
        Ok(Model { params, basis, h0, perturbations, focus, order })
    }
    /// The declared parameters; `ParamId(k)` is `params()[k]`.
    pub fn params(&self) -> &[Param] {
        &self.params
    }
    /// Parameter names in declaration order.
    pub fn param_names(&self) -> Vec<String> {
        self.params.iter().map(|p| p.name.clone()).collect()
    }
    /// The product basis.
    pub fn basis(&self) -> &Basis {
        &self.basis
    }
    /// The unperturbed Hamiltonian.
    pub fn h0(&self) -> &Operator {
        &self.h0
    }
    /// `V1, V2, ...`: the term entering at `lambda^(k+1)` is `perturbations()[k]`.
    pub fn perturbations(&self) -> &[Operator] {
        &self.perturbations
    }
    /// The `focus` lines: each is a set of H0 energies forming one model space.
    pub fn focus(&self) -> &[Vec<RatFunc>] {
        &self.focus
    }
    /// The default order from `order N`, if given.
    pub fn order(&self) -> Option<u32> {
        self.order
    }
    /// Whether any operator entry depends on a parameter.
    pub fn is_symbolic(&self) -> bool {
        std::iter::once(&self.h0)
            .chain(&self.perturbations)
            .any(|op| op.triplets().any(|(_, _, v)| v.as_constant().is_none()))
    }
}

/// Helper used by tests and builders: the operator `value * identity` on `n` states.
pub fn scalar_operator(n: usize, value: RatFunc) -> Operator {
    if value.is_zero() {
        Operator::zeros(n, n)
    } else {
        Operator::identity(n).scale(&value)
    }
}
