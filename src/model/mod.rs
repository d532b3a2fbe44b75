//! The typed model: spaces, the basis of product states, exact operators, and the perturbation
//! problem. Start from [`Model`]. Built by `lower` from source text or directly through the
//! constructors here (operators as [`OperatorExpr`], turned into matrices on a [`Basis`]); knows
//! nothing of source text, spans or pest.
#![deny(clippy::float_arithmetic)]

mod basis;
mod operator;
pub mod space;

pub use basis::{Basis, Key, Layout};
pub use operator::{LeavesBasis, NotDiagonal, OperatorExpr};
pub use space::{Kind, LabelField, Space, SpinOp};

use crate::exact::{Field, Monomial, ParamId, Poly, Radical, RatFunc, Rational};
use crate::linalg::SparseMatrix;

/// An exact operator on the product space, with entries that may depend on the parameters.
pub type Operator = SparseMatrix<RatFunc>;

/// The most states a basis may have (all product states, or those a sector keeps).
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

/// A named linear combination of branch energies (`quantity ZZ = E|1, 1> - ...`): each term a
/// basis state, naming the branch that comes from it, and a weight.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Quantity {
    /// The name as written.
    pub name: String,
    /// `(basis state, weight)` pairs.
    pub terms: Vec<(usize, RatFunc)>,
}

/// The operators a model space's effective Hamiltonian is also written in (`focus ... as spins`).
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Target {
    /// One spin 1/2 per singly occupied site of a fermion space (up is `+1/2`), and every
    /// `spin(1/2)` space as itself; terms are products of `S^x`, `S^y`, `S^z`.
    Spins,
    /// One qubit per ladder, oscillator or two-level space, its two lowest states `|0>`, `|1>`;
    /// terms are products of the Pauli matrices `X`, `Y`, `Z`.
    Qubits,
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
    targets: Vec<Option<Target>>,
    quantities: Vec<Quantity>,
    fixed: Vec<(String, Rational)>,
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
        let targets = vec![None; focus.len()];
        Ok(Model {
            params,
            basis,
            h0,
            perturbations,
            focus,
            order,
            targets,
            quantities: Vec::new(),
            fixed: Vec::new(),
        })
    }
    /// The same model with operator targets for its `focus` lines (`targets[k]` for line `k`;
    /// missing entries are `None`).
    pub fn with_targets(mut self, mut targets: Vec<Option<Target>>) -> Model {
        targets.resize(self.focus.len(), None);
        self.targets = targets;
        self
    }
    /// The same model with named quantities; every state index must be in the basis.
    pub fn with_quantities(mut self, quantities: Vec<Quantity>) -> Model {
        self.quantities = quantities;
        self
    }
    /// The operator target of each `focus` line.
    pub fn targets(&self) -> &[Option<Target>] {
        &self.targets
    }
    /// The named quantities.
    pub fn quantities(&self) -> &[Quantity] {
        &self.quantities
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
    /// The parameters fixed by [`Model::substitute`], with their values, in declaration order.
    pub fn fixed(&self) -> &[(String, Rational)] {
        &self.fixed
    }
    /// The model with exact values put in for some parameters (`--set wq=5`): they leave the
    /// parameter list, the others keep their order, and [`Model::fixed`] records the values.
    ///
    /// A numeric model (every parameter fixed) is derived in exact numbers rather than rational
    /// functions, which is much faster, and gives the symbolic result evaluated at the values
    /// wherever that result is defined there.
    pub fn substitute(&self, values: &[(String, Rational)]) -> Result<Model, SubstituteError> {
        let mut value_of: Vec<Option<&Rational>> = vec![None; self.params.len()];
        for (name, value) in values {
            let Some(k) = self.params.iter().position(|p| &p.name == name) else {
                return Err(SubstituteError::UnknownParameter {
                    name: name.clone(),
                    known: self.param_names(),
                });
            };
            if value_of[k].is_some() {
                return Err(SubstituteError::Twice { name: name.clone() });
            }
            if self.params[k].positive && !value.is_positive() {
                return Err(SubstituteError::NotPositive { name: name.clone() });
            }
            value_of[k] = Some(value);
        }
        // Kept parameters are renumbered in order: `new_id[k]` is the new index of `ParamId(k)`.
        let mut new_id: Vec<Option<u32>> = Vec::with_capacity(self.params.len());
        let mut n_kept = 0;
        for value in &value_of {
            new_id.push(value.is_none().then_some(n_kept));
            n_kept += u32::from(value.is_none());
        }
        let fix = |x: &RatFunc| -> Result<RatFunc, SubstituteError> {
            let mut res = x.clone();
            for (k, value) in value_of.iter().enumerate() {
                if let Some(value) = value {
                    res = res
                        .eval_param(ParamId(k as u32), &Radical::from((*value).clone()))
                        .ok_or(SubstituteError::Pole { name: self.params[k].name.clone() })?;
                }
            }
            Ok(renumber(&res, &new_id))
        };
        let fix_operator = |op: &Operator| -> Result<Operator, SubstituteError> {
            let mut error = None;
            let res = op.map(|x| {
                fix(x).unwrap_or_else(|err| {
                    error.get_or_insert(err);
                    RatFunc::zero()
                })
            });
            error.map_or(Ok(res), Err)
        };
        let h0 = fix_operator(&self.h0)?;
        let perturbations =
            self.perturbations.iter().map(fix_operator).collect::<Result<Vec<_>, _>>()?;
        let focus = self
            .focus
            .iter()
            .map(|line| line.iter().map(&fix).collect::<Result<Vec<_>, _>>())
            .collect::<Result<Vec<_>, _>>()?;
        let quantities = self
            .quantities
            .iter()
            .map(|q| {
                let terms = q
                    .terms
                    .iter()
                    .map(|(state, weight)| Ok((*state, fix(weight)?)))
                    .collect::<Result<Vec<_>, SubstituteError>>()?;
                Ok(Quantity { name: q.name.clone(), terms })
            })
            .collect::<Result<Vec<_>, SubstituteError>>()?;
        let mut fixed = self.fixed.clone();
        let mut params = Vec::new();
        for (param, value) in self.params.iter().zip(&value_of) {
            match value {
                Some(value) => fixed.push((param.name.clone(), (*value).clone())),
                None => params.push(param.clone()),
            }
        }
        Ok(Model {
            params,
            basis: self.basis.clone(),
            h0,
            perturbations,
            focus,
            order: self.order,
            targets: self.targets.clone(),
            quantities,
            fixed,
        })
    }
    /// Whether any operator entry depends on a parameter.
    pub fn is_symbolic(&self) -> bool {
        std::iter::once(&self.h0)
            .chain(&self.perturbations)
            .any(|op| op.triplets().any(|(_, _, v)| v.as_constant().is_none()))
    }
}

/// Why [`Model::substitute`] could not put in the values it was given.
#[derive(Clone, Debug, PartialEq, Eq)]
pub enum SubstituteError {
    /// No parameter has this name.
    UnknownParameter {
        /// The name given.
        name: String,
        /// The model's parameters.
        known: Vec<String>,
    },
    /// The same parameter was given two values.
    Twice {
        /// The parameter.
        name: String,
    },
    /// A parameter declared `> 0` was given a value that is not positive.
    NotPositive {
        /// The parameter.
        name: String,
    },
    /// The value makes a denominator in the model vanish.
    Pole {
        /// The parameter.
        name: String,
    },
}

impl std::fmt::Display for SubstituteError {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        match self {
            SubstituteError::UnknownParameter { name, known } if known.is_empty() => {
                write!(f, "the model has no parameter `{name}` (it has none)")
            }
            SubstituteError::UnknownParameter { name, known } => {
                write!(f, "the model has no parameter `{name}` (it has: {})", known.join(", "))
            }
            SubstituteError::Twice { name } => write!(f, "`{name}` is given twice"),
            SubstituteError::NotPositive { name } => {
                write!(f, "`{name}` is declared `> 0`, so its value must be positive")
            }
            SubstituteError::Pole { name } => {
                write!(f, "this value of `{name}` makes a denominator in the model vanish")
            }
        }
    }
}

impl std::error::Error for SubstituteError {}

/// `value` with `ParamId(k)` renamed to `ParamId(new_id[k])`; every parameter it mentions must
/// have a new id. The renaming keeps the order of the ids, so canonical forms stay canonical.
fn renumber(value: &RatFunc, new_id: &[Option<u32>]) -> RatFunc {
    let poly = |p: &Poly| {
        Poly::from_terms(
            p.terms()
                .iter()
                .map(|(m, c)| {
                    let factors = m
                        .factors()
                        .iter()
                        .map(|(p, e)| {
                            let id = new_id.get(p.0 as usize).copied().flatten();
                            (ParamId(id.expect("substituted parameters are gone")), *e)
                        })
                        .collect();
                    (Monomial::new(factors), c.clone())
                })
                .collect(),
        )
    };
    RatFunc::new(poly(value.numer()), poly(value.denom()))
        .expect("renaming keeps a denominator nonzero")
}

/// Helper used by tests and builders: the operator `value * identity` on `n` states.
pub fn scalar_operator(n: usize, value: RatFunc) -> Operator {
    if value.is_zero() {
        Operator::zeros(n, n)
    } else {
        Operator::identity(n).scale(&value)
    }
}
