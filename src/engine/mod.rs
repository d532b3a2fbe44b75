//! The expansion engine: effective Hamiltonians, branches and states, order by order.
//!
//! Start from [`derive()`], which turns a [`Model`] into one [`Derivation`] that every output reads.
//! The engine knows no output format.
//!
//! # How a derivation runs
//! 1. `spectrum` finds the exact levels of H0; the engine rewrites the problem in a basis of H0
//!    eigenvectors (orthogonal, not normalized, so no new square roots appear) with a diagonal
//!    metric (`bloch::Problem`).
//! 2. For each model space, `bloch::wave_operator` builds Bloch's wave operator, the Bloch
//!    effective Hamiltonian and the Hermitian (des Cloizeaux) one, order by order.
//! 3. `split::branches` runs Kato's reduction on the Hermitian effective Hamiltonian: every
//!    eigenvalue branch with its multiplicity, the order at which it split off, and its state.
//!
//! Arithmetic runs in the smallest field that holds the problem: rationals (a one-state model
//! space whose couplings a diagonal rescaling makes rational), the radical field (numeric models),
//! or rational functions of the parameters.
#![deny(clippy::float_arithmetic)]

mod algebraic;
mod bloch;
pub mod cost;
mod fast;
mod notes;
mod operator_form;
mod quantities;
mod split;

pub use operator_form::{Component, OperatorForm, OperatorTerm};
pub use quantities::QuantitySeries;

use std::collections::BTreeSet;
use std::sync::OnceLock;

use crate::exact::{Field, Fraction, Radical, RatFunc, Rational, SquareRoot};
use crate::linalg::{DenseMatrix, SparseMatrix, SparseVec};
use crate::model::Model;
use crate::spectrum::{self, Spectrum};
use algebraic::Context;
use bloch::Problem;
pub use notes::asymptotic_caution_applies;
use split::{branches, lift, FieldTooSmall, RawBranch, RawSecular, Stage};

pub use crate::model::MAX_ORDER;

/// Options of one derivation.
#[derive(Clone, Debug)]
pub struct DeriveOptions {
    /// The order N in lambda.
    pub order: u32,
    /// The highest order of state corrections to report; `None` means `min(N, 4)`.
    pub states: Option<u32>,
}

impl DeriveOptions {
    /// Energies and effective Hamiltonians to `order`, states to the default order.
    pub fn new(order: u32) -> DeriveOptions {
        DeriveOptions { order, states: None }
    }
    /// The order of state corrections reported.
    pub fn states_to(&self) -> u32 {
        self.states.unwrap_or(self.order.min(4)).min(self.order)
    }
}

/// Everything derived for one model, to one order; every output reads this value.
#[derive(Clone, Debug)]
pub struct Derivation {
    /// The order N.
    pub order: u32,
    /// Parameter names in declaration order (the JSON's `parameters`).
    pub parameters: Vec<String>,
    /// The unperturbed spectrum the model spaces were built from.
    pub spectrum: Spectrum,
    /// One entry per model space, in `focus` order or in level order.
    pub model_spaces: Vec<ModelSpace>,
    /// Algebraic numbers that square roots cannot write; root `r` appears in values as the symbol
    /// `ParamId(parameters.len() + r)`.
    pub roots: Vec<RootAtom>,
    /// The model's named quantities, in declaration order.
    pub quantities: Vec<QuantitySeries>,
}

impl Derivation {
    /// Names of every symbol a value may mention: the parameters, then `root_between(P, lo, hi)`
    /// for each root.
    pub fn symbol_names(&self) -> Vec<String> {
        let mut names = self.parameters.clone();
        names.extend(self.roots.iter().map(RootAtom::name));
        names
    }
}

/// The `index`-th real root (1-based, ascending) of a monic irreducible rational polynomial.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct RootAtom {
    /// Coefficients of the monic polynomial `P`, from `x^0` up.
    pub polynomial: Vec<Rational>,
    /// Which real root, counting from 1 in ascending order.
    pub index: usize,
    /// An isolating interval `(lo, hi]` narrower than `2^-80`.
    pub interval: (Rational, Rational),
}

impl RootAtom {
    /// `root_between(P, lo, hi)`: the only real root of `P` strictly between the rationals `lo`
    /// and `hi`, the simplest such bounds (smallest denominators); the model language reads it
    /// back.
    pub fn name(&self) -> String {
        let p = crate::exact::univariate::UniPoly::new(self.polynomial.clone());
        let (lo, hi) = self.bounds();
        format!("root_between({}, {lo}, {hi})", p.display("x"))
    }
    /// Simple rational bounds `lo < root < hi` with no other real root of `P` between them.
    pub fn bounds(&self) -> (Rational, Rational) {
        let p = crate::exact::univariate::UniPoly::new(self.polynomial.clone());
        let isolated = crate::exact::roots::isolate_real_roots(&p);
        let (lo, hi) = self.interval.clone();
        // The neighbors lie at or below the previous interval's upper end and above the next
        // interval's lower end.
        let width = Rational::ratio(1, 1024).expect("non-zero");
        let near =
            |k: usize| isolated.get(k).map(|i| crate::exact::roots::refine(&p, i.clone(), &width));
        let below = self.index.checked_sub(2).and_then(near).map(|i| i.1);
        let above = near(self.index).map(|i| i.0);
        (simplest_between(below.as_ref(), &lo, true), simplest_between(above.as_ref(), &hi, false))
    }
    /// The midpoint of the isolating interval, within `2^-80` of the root.
    pub fn approximation(&self) -> Rational {
        (self.interval.0.clone() + &self.interval.1) * Rational::ratio(1, 2).expect("2 != 0")
    }
}

/// The rational with the smallest denominator (then the smallest numerator) in `(far, near]`
/// (`lower`) or `[near, far)` (upper), `far` absent meaning unbounded; the root lies strictly
/// beyond `near` and every other root at or beyond `far`.
fn simplest_between(far: Option<&Rational>, near: &Rational, lower: bool) -> Rational {
    use num_bigint::BigInt;
    use num_integer::Integer;
    let inside = |q: &Rational| match (far, lower) {
        (Some(f), true) => q > f && q <= near,
        (Some(f), false) => q < f && q >= near,
        (None, true) => q <= near,
        (None, false) => q >= near,
    };
    for d in 1i64..=4096 {
        let scaled = near.clone() * Rational::from_i64(d);
        // The candidate nearest the root on the right side: floor below, ceiling above.
        let n = if lower {
            scaled.numer().div_floor(scaled.denom())
        } else {
            -(-scaled.numer().clone()).div_floor(scaled.denom())
        };
        let q = Rational::new(n, BigInt::from(d)).expect("d > 0");
        if inside(&q) {
            return q;
        }
    }
    near.clone()
}

/// The results for one model space.
#[derive(Clone, Debug)]
pub struct ModelSpace {
    /// The H0 energies in this model space.
    pub unperturbed: Vec<RatFunc>,
    /// The model-space states in the product basis, normalized where the norm's square root is
    /// exact (see `normalized`).
    pub basis: Vec<SparseVec<RatFunc>>,
    /// Whether `basis` is orthonormal; when false, `effective_hamiltonian` is written in the
    /// orthogonal but unnormalized basis and `basis_norms` gives the squared norms.
    pub normalized: bool,
    /// Squared norms of the unnormalized model-space states.
    pub basis_norms: Vec<RatFunc>,
    /// The Hermitian effective Hamiltonian, `effective_hamiltonian[k]` the coefficient of
    /// `lambda^k`, in the basis `basis`.
    pub effective_hamiltonian: Vec<DenseMatrix<RatFunc>>,
    /// Bloch's (non-Hermitian) effective Hamiltonian, same basis and orders.
    pub bloch_hamiltonian: Vec<DenseMatrix<RatFunc>>,
    /// The eigenvalue branches.
    pub branches: Vec<Branch>,
    /// Secular problems solved on the way, in the order met.
    pub secular: Vec<SecularEquation>,
    /// Things the reader must know about these results.
    pub notes: Vec<Note>,
    /// The effective Hamiltonian written in spin or qubit operators, where the `focus` line
    /// asked for it.
    pub operator_form: Option<OperatorForm>,
}

/// One eigenvalue branch `E(lambda) = sum_k lambda^k energy[k]`.
#[derive(Clone, Debug)]
pub struct Branch {
    /// Coefficients of `lambda^k`, `k = 0..=N`; shorter when the branch could not be split
    /// exactly at some order (see `not_split`).
    pub energy: Vec<RatFunc>,
    /// How many states still share this branch at order N.
    pub multiplicity: usize,
    /// Order at which this branch first differs from its siblings.
    pub split_at: Option<u32>,
    /// The state, when the branch is a single one.
    pub state: Option<StateSeries>,
    /// The unperturbed states the branch comes from, in the product basis: its zeroth-order
    /// state when it is a single one, else a basis of its group's zeroth-order space (normalized
    /// where the square root of the norm is exact). Empty only for a branch written with an
    /// algebraic root whose state could not be formed.
    pub zeroth_order: Vec<SparseVec<RatFunc>>,
    /// Why `state` is absent, when it is.
    pub state_missing: Option<MissingState>,
    /// Set when the secular matrix of this group could not be split exactly.
    pub not_split: Option<NotSplit>,
}

/// Why a branch reports no state.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum MissingState {
    /// The branch's group does not split by order N, so no single state belongs to it.
    GroupNotSplit,
    /// A denominator of the state vanishes at this root of `P` (a zero divisor of the extension).
    Extension,
}

/// The eigenvector series of a branch in the product basis, in intermediate normalization:
/// `<psi0|psi(lambda)> = <psi0|psi0>`, i.e. no correction has a component along `psi0`;
/// `psi0` is normalized whenever the square root of its norm is exact.
#[derive(Clone, Debug)]
pub struct StateSeries {
    /// `psi^(k)` for `k = 0..=determined_to`, as product-basis vectors; `psi^(0)` is not normalized.
    pub coefficients: Vec<SparseVec<RatFunc>>,
    /// The order to which the state is determined by an effective Hamiltonian of order N: `N - s`
    /// when the branch stood alone from order `s` on (ENGINE.md §5).
    pub determined_to: u32,
}

/// A secular equation `det(H_eff^(k) - x) = 0` solved at order `order` of the reduction.
#[derive(Clone, Debug)]
pub struct SecularEquation {
    /// The order whose coefficient matrix was split.
    pub order: u32,
    /// `det(x - A)`, coefficients from `x^0` up.
    pub characteristic: Vec<RatFunc>,
    /// The distinct roots with their multiplicities.
    pub roots: Vec<(RatFunc, usize)>,
}

/// A group whose secular matrix could not be split exactly.
#[derive(Clone, Debug)]
pub struct NotSplit {
    /// The order of the secular matrix.
    pub order: u32,
    /// Its characteristic polynomial, coefficients from `x^0` up.
    pub characteristic: Vec<RatFunc>,
    /// Why.
    pub reason: String,
}

/// Something the reader must know about a model space's results.
#[derive(Clone, Debug, PartialEq, Eq)]
pub enum Note {
    /// The wave operator came within the coupling range of the top of a space that stands for a
    /// larger one cut off (an oscillator, a rotor), so some reported coefficients may differ from
    /// those of the uncut space: the energies from `energies_from` on and the state corrections
    /// from `states_from` on (either absent when none of those reported is affected).
    Truncation {
        /// The space's name.
        space: String,
        /// Its declaration: `oscillator(40)`, `rotor(4)`.
        cut: String,
        /// The lowest energy order the cut can have changed, if it is reported.
        energies_from: Option<u32>,
        /// The lowest order of state corrections the cut can have changed, if it is reported.
        states_from: Option<u32>,
        /// A declaration of the same space that makes every reported coefficient exact.
        sufficient: String,
    },
}

/// Why a derivation could not be done.
#[derive(Clone, Debug, PartialEq, Eq)]
pub enum EngineError {
    /// A computation that cannot be done, with what the user can change.
    Infeasible(String),
    /// A problem with the input that the user must fix (a focus energy that is no level, ...).
    BadInput(String),
    /// The `focus` line with this index (in [`Model::focus`] order) names no H0 level.
    BadFocus {
        /// Index of the focus line.
        line: usize,
        /// What is wrong.
        message: String,
    },
    /// The order asked for is outside `1..=MAX_ORDER`.
    BadOrder(String),
    /// A term of a named quantity names no single branch.
    BadQuantity {
        /// Index of the quantity (in [`Model::quantities`] order).
        quantity: usize,
        /// Index of its term.
        term: usize,
        /// What is wrong.
        message: String,
    },
}

impl std::fmt::Display for EngineError {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        match self {
            EngineError::Infeasible(why)
            | EngineError::BadInput(why)
            | EngineError::BadOrder(why)
            | EngineError::BadFocus { message: why, .. }
            | EngineError::BadQuantity { message: why, .. } => write!(f, "{why}"),
        }
    }
}

/// A field the engine can compute in: it can take back exact values found by the eigen-solver.
pub(crate) trait Scalar: Field {
    /// The value in this field, if it lies there.
    fn from_ratfunc(value: &RatFunc) -> Option<Self>;
}

impl Scalar for Rational {
    fn from_ratfunc(value: &RatFunc) -> Option<Rational> {
        value.as_constant()?.as_rational()
    }
}

impl Scalar for Radical {
    fn from_ratfunc(value: &RatFunc) -> Option<Radical> {
        value.as_constant()
    }
}

impl Scalar for Fraction {
    fn from_ratfunc(value: &RatFunc) -> Option<Fraction> {
        Some(Fraction::from_ratfunc(value))
    }
}

impl Scalar for RatFunc {
    fn from_ratfunc(value: &RatFunc) -> Option<RatFunc> {
        Some(value.clone())
    }
}

/// The problem in the working basis (H0 eigenvectors), before a field is chosen.
struct Working {
    problem: Problem<RatFunc>,
    /// Column `i` is working state `i` in the product basis.
    columns: Vec<SparseVec<RatFunc>>,
    /// The level of each working state.
    level_of: Vec<usize>,
    /// The problem in the radical field when it is numeric, and its rational rescaling: the same
    /// for every model space, so each is found once, when first needed.
    radical: OnceLock<Option<Problem<Radical>>>,
    rational: OnceLock<Option<(Problem<Rational>, fast::Rescaling)>>,
    /// The problem with denominators kept as products of known factors, for symbolic models.
    fraction: OnceLock<Problem<Fraction>>,
}

impl Working {
    fn new(
        problem: Problem<RatFunc>,
        columns: Vec<SparseVec<RatFunc>>,
        level_of: Vec<usize>,
    ) -> Working {
        Working {
            problem,
            columns,
            level_of,
            radical: OnceLock::new(),
            rational: OnceLock::new(),
            fraction: OnceLock::new(),
        }
    }
    fn radical(&self) -> Option<&Problem<Radical>> {
        self.radical.get_or_init(|| try_convert::<Radical>(&self.problem)).as_ref()
    }
    fn rational(&self) -> Option<&(Problem<Rational>, fast::Rescaling)> {
        self.rational.get_or_init(|| self.radical().and_then(fast::rationalize)).as_ref()
    }
    fn fraction(&self) -> &Problem<Fraction> {
        self.fraction.get_or_init(|| {
            try_convert::<Fraction>(&self.problem).expect("every rational function converts")
        })
    }
}

/// Solves every job on the available cores, each with a fresh context, in job order; `None` when
/// a single core is available or some model space met an algebraic root (see `derive`).
fn solve_in_parallel<J: Sync>(
    jobs: &[J],
    new_ctx: &(impl Fn(usize) -> Context + Sync),
    solve: &(impl Fn(&J, &mut Context) -> ModelSpace + Sync),
) -> Option<Vec<ModelSpace>> {
    let threads = std::thread::available_parallelism().map_or(1, |n| n.get()).min(jobs.len());
    if threads <= 1 {
        return None;
    }
    let next = std::sync::atomic::AtomicUsize::new(0);
    let done: std::sync::Mutex<Vec<Option<ModelSpace>>> =
        std::sync::Mutex::new((0..jobs.len()).map(|_| None).collect());
    let roots_met = std::sync::atomic::AtomicBool::new(false);
    std::thread::scope(|scope| {
        for _ in 0..threads {
            scope.spawn(|| loop {
                let k = next.fetch_add(1, std::sync::atomic::Ordering::Relaxed);
                if k >= jobs.len() || roots_met.load(std::sync::atomic::Ordering::Relaxed) {
                    break;
                }
                let mut ctx = new_ctx(k);
                let space = solve(&jobs[k], &mut ctx);
                if !ctx.roots.is_empty() {
                    roots_met.store(true, std::sync::atomic::Ordering::Relaxed);
                    break;
                }
                done.lock().expect("no thread panics while holding it")[k] = Some(space);
            });
        }
    });
    if roots_met.into_inner() {
        return None;
    }
    done.into_inner().expect("no thread panicked").into_iter().collect()
}

/// Where a derivation is: model space `space` of `spaces` (from 1) is at order `order`.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct Progress {
    /// The model space, counted from 1 in output order.
    pub space: usize,
    /// How many model spaces the derivation has.
    pub spaces: usize,
    /// The order its wave operator is computing.
    pub order: usize,
}

/// Derives the perturbation series of `model` to `options.order`.
pub fn derive(model: &Model, options: &DeriveOptions) -> Result<Derivation, EngineError> {
    derive_with_progress(model, options, std::sync::Arc::new(|_| {}))
}

/// [`derive()`], telling `report` where it is as it goes (from several threads at once when model
/// spaces run in parallel); the result is the same.
pub fn derive_with_progress(
    model: &Model,
    options: &DeriveOptions,
    report: std::sync::Arc<dyn Fn(Progress) + Send + Sync>,
) -> Result<Derivation, EngineError> {
    let order = options.order;
    if order == 0 {
        return Err(EngineError::BadOrder("the order must be at least 1".into()));
    }
    if order > MAX_ORDER {
        return Err(EngineError::BadOrder(format!(
            "order {order} is beyond what cleave computes (at most {MAX_ORDER})"
        )));
    }
    let spectrum =
        spectrum::unperturbed_levels(model).map_err(|e| EngineError::Infeasible(e.to_string()))?;
    let working = working_problem(model, &spectrum);
    let spaces = model_space_levels(model, &spectrum)?;
    let n = working.problem.energies.len() as u64;
    let space_dims: Vec<usize> = spaces
        .iter()
        .map(|levels| working.level_of.iter().filter(|l| levels.contains(l)).count())
        .collect();
    let estimate = cost::estimate(model, n as usize, &space_dims, order);
    if !estimate.is_allowed() {
        return Err(EngineError::Infeasible(too_costly(&estimate, spaces.len(), n, order)));
    }
    let mut jobs = Vec::with_capacity(spaces.len());
    for levels in spaces {
        let indices: Vec<usize> = (0..working.level_of.len())
            .filter(|&i| levels.contains(&working.level_of[i]))
            .collect();
        let cost = n * indices.len() as u64 * u64::from(order);
        if cost > 400_000_000 {
            return Err(EngineError::Infeasible(format!(
                "a model space of {} states in a space of {n} states to order {order} needs more \
                 memory than cleave allows; lower the order, the oscillator cutoffs, or focus on \
                 fewer levels",
                indices.len()
            )));
        }
        jobs.push((levels, indices));
    }
    let n_params = model.params().len() as u32;
    let solve = |(levels, indices): &(Vec<usize>, Vec<usize>), ctx: &mut Context| {
        let states_to = options.states_to() as usize;
        let order = order as usize;
        solve_model_space(states_to, model, &spectrum, &working, levels, indices, order, ctx)
    };
    // Model spaces are independent, so they run on all cores; results keep the model-space
    // order. Only algebraic roots tie them together (a root found in one space is numbered for
    // all that follow), so when any space meets one, the spaces run again in order.
    let spaces = jobs.len();
    let new_ctx = |k: usize| {
        let report = std::sync::Arc::clone(&report);
        let on_order: std::sync::Arc<dyn Fn(usize) + Send + Sync> =
            std::sync::Arc::new(move |m| report(Progress { space: k + 1, spaces, order: m }));
        Context::new(n_params, Some(on_order))
    };
    let parallel = solve_in_parallel(&jobs, &new_ctx, &solve);
    let (model_spaces, ctx) = match parallel {
        Some(spaces) => (spaces, Context::new(n_params, None)),
        None => {
            let mut ctx = Context::new(n_params, None);
            let mut spaces = Vec::with_capacity(jobs.len());
            for (k, job) in jobs.iter().enumerate() {
                ctx.on_order = new_ctx(k).on_order;
                spaces.push(solve(job, &mut ctx));
            }
            (spaces, ctx)
        }
    };
    let mut model_spaces = model_spaces;
    if !model.focus().is_empty() {
        for (space, target) in model_spaces.iter_mut().zip(model.targets()) {
            if let Some(target) = target {
                space.operator_form = Some(
                    operator_form::operator_form(model, space, *target)
                        .map_err(EngineError::Infeasible)?,
                );
            }
        }
    }
    let quantities = quantities::quantities(model, &model_spaces, order)?;
    Ok(Derivation {
        order,
        parameters: model.param_names(),
        spectrum,
        model_spaces,
        roots: ctx.roots,
        quantities,
    })
}

/// The refusal of a derivation that [`cost::estimate`] finds too costly, with what to change.
fn too_costly(estimate: &cost::Cost, n_spaces: usize, n_states: u64, order: u32) -> String {
    let params = match estimate.n_params {
        0 => "no parameters".to_string(),
        1 => "1 parameter".to_string(),
        k => format!("{k} parameters"),
    };
    let mut advice = vec!["lower the order"];
    if estimate.largest_space > 1 || n_spaces > 1 {
        advice.push("focus on fewer levels (`focus`)");
    }
    advice.push("keep to one sector of a conserved quantity, or cut oscillators shorter");
    if estimate.n_params > 0 {
        advice.push("write fixed numbers for some parameters");
    }
    let why = if estimate.secular_work > cost::MAX_SECULAR_WORK {
        format!(
            "a model space of {} states is too large for its secular equation to be split exactly",
            estimate.largest_space
        )
    } else if estimate.terms_per_coefficient > cost::MAX_TERMS_PER_COEFFICIENT {
        format!(
            "a coefficient of order {order} in {params} can have {} terms (cleave allows {})",
            estimate.terms_per_coefficient,
            cost::MAX_TERMS_PER_COEFFICIENT
        )
    } else {
        format!(
            "{n_spaces} model space(s), the largest of {} states, in {n_states} states with \
             {params} to order {order} would take far too long (estimated work 10^{} units, \
             cleave allows 10^{})",
            estimate.largest_space,
            estimate.work.max(1).ilog10(),
            cost::MAX_WORK.ilog10()
        )
    };
    format!("this derivation is too large: {why}; {}", advice.join(", "))
}

/// Rewrites H0 + V in the basis of H0 eigenvectors: `A_0` diagonal, metric `g_i = <u_i, u_i>`,
/// `A_k[i][j] = <u_i, V_k u_j> / g_i`.
fn working_problem(model: &Model, spectrum: &Spectrum) -> Working {
    let mut columns = Vec::new();
    let mut energies = Vec::new();
    let mut level_of = Vec::new();
    for (l, level) in spectrum.levels.iter().enumerate() {
        for v in &level.states {
            columns.push(v.clone());
            energies.push(level.energy.clone());
            level_of.push(l);
        }
    }
    if spectrum.diagonal {
        // Unit vectors in level order: a permutation of the product basis.
        let perm: Vec<usize> = columns.iter().map(|c| c.entries()[0].0).collect();
        let terms = model.perturbations().iter().map(|v| v.submatrix(&perm, &perm)).collect();
        let metric = vec![RatFunc::one(); perm.len()];
        return Working::new(Problem { energies, metric, terms }, columns, level_of);
    }
    let metric: Vec<RatFunc> = columns.iter().map(|u| u.conj().dot(u)).collect();
    let inv_metric: Vec<RatFunc> = metric.iter().map(|g| g.inv().expect("non-zero norm")).collect();
    let conj_columns: Vec<SparseVec<RatFunc>> = columns.iter().map(SparseVec::conj).collect();
    // Which columns hold each product-basis state: `<u_i, V u_j>` is formed only for the columns
    // that share a state with `V u_j`, not for all n^2 pairs.
    let n_product = model.basis().dimension();
    let mut holders: Vec<Vec<(usize, &RatFunc)>> = vec![Vec::new(); n_product];
    for (i, ui) in conj_columns.iter().enumerate() {
        for (p, x) in ui.entries() {
            holders[*p].push((i, x));
        }
    }
    let terms = model
        .perturbations()
        .iter()
        .map(|v| {
            let mut triplets = Vec::new();
            for (j, u) in columns.iter().enumerate() {
                let image = v.mul_vec(u);
                let mut products: Vec<(usize, RatFunc)> = Vec::new();
                for (p, y) in image.entries() {
                    for (i, x) in &holders[*p] {
                        products.push((*i, x.mul_ref(y)));
                    }
                }
                for (i, x) in SparseVec::from_pairs(products).entries() {
                    triplets.push((*i, j, x.clone() * &inv_metric[*i]));
                }
            }
            SparseMatrix::from_triplets(columns.len(), columns.len(), triplets)
        })
        .collect();
    Working::new(Problem { energies, metric, terms }, columns, level_of)
}

/// The level indices of each model space: the `focus` lines, or every level on its own.
fn model_space_levels(model: &Model, spectrum: &Spectrum) -> Result<Vec<Vec<usize>>, EngineError> {
    if model.focus().is_empty() {
        return Ok((0..spectrum.levels.len()).map(|l| vec![l]).collect());
    }
    let names = model.param_names();
    let symbols = crate::exact::Symbols { names: &names };
    let mut res = Vec::new();
    for (line_idx, line) in model.focus().iter().enumerate() {
        let mut levels = Vec::new();
        for energy in line {
            match spectrum.levels.iter().position(|l| l.energy == *energy) {
                Some(l) if !levels.contains(&l) => levels.push(l),
                Some(_) => {}
                None => {
                    let known: Vec<String> = spectrum
                        .levels
                        .iter()
                        .map(|l| l.energy.display(symbols).to_string())
                        .collect();
                    return Err(EngineError::BadFocus {
                        line: line_idx,
                        message: format!(
                            "focus energy {} is not an H0 level; the levels are {}",
                            energy.display(symbols),
                            known.join(", ")
                        ),
                    });
                }
            }
        }
        levels.sort_unstable();
        res.push(levels);
    }
    Ok(res)
}

/// The raw results of one model space in some field.
struct RawSpace<F> {
    bloch: bloch::Bloch<F>,
    branches: Vec<RawBranch<F>>,
    secular: Vec<RawSecular>,
    /// Branch vectors in working coordinates.
    vectors: Vec<Option<Vec<SparseVec<F>>>>,
    /// The indices each `Omega_m` reaches, `m = 0..=N` (for the truncation caution).
    omega_support: Vec<BTreeSet<usize>>,
}

fn solve_in<F: Scalar>(
    problem: &Problem<F>,
    indices: &[usize],
    order: usize,
    ctx: &mut Context,
) -> Result<RawSpace<F>, FieldTooSmall> {
    let bloch = bloch::wave_operator_with(problem, indices, order, &|m| ctx.report_order(m));
    let support = omega_support(&bloch);
    reduce(problem, bloch, support, indices, ctx, |bloch, c| lift(bloch, c))
}

/// The indices each `Omega_m` reaches, `m = 0..=N`.
fn omega_support<F: Field>(bloch: &bloch::Bloch<F>) -> Vec<BTreeSet<usize>> {
    let columns = bloch.omega.iter();
    columns
        .map(|cols| cols.iter().flat_map(|c| c.entries().iter().map(|(i, _)| *i)).collect())
        .collect()
}

/// A symbolic model space: the wave operator and both effective Hamiltonians run on fractions
/// over the known energy differences (sums without gcds), then the values are cancelled by those
/// factors into lowest-terms rational functions for Kato's reduction and the results.
fn solve_symbolic(
    working: &Working,
    indices: &[usize],
    order: usize,
    ctx: &mut Context,
) -> Result<RawSpace<RatFunc>, FieldTooSmall> {
    let fractions =
        bloch::wave_operator_with(working.fraction(), indices, order, &|m| ctx.report_order(m));
    let support = omega_support(&fractions);
    // The wave operator itself stays in fractions: only the states need it, lifted below.
    let bloch = fractions.map_matrices(Fraction::to_ratfunc);
    // States are lifted with the fractions too: the sums over the wave operator's columns are
    // where a gcd per addition would cost most.
    let lift_fractions = |_: &bloch::Bloch<RatFunc>, c: &[SparseVec<RatFunc>]| {
        let c: Vec<SparseVec<Fraction>> =
            c.iter().map(|v| v.map(|_, x| Fraction::from_ratfunc(x))).collect();
        lift(&fractions, &c).iter().map(|v| v.map(|_, x| x.to_ratfunc())).collect()
    };
    reduce(&working.problem, bloch, support, indices, ctx, lift_fractions)
}

/// Kato's reduction of a model space whose wave operator is known, and the branch states.
fn reduce<F: Scalar>(
    problem: &Problem<F>,
    bloch: bloch::Bloch<F>,
    omega_support: Vec<BTreeSet<usize>>,
    indices: &[usize],
    ctx: &mut Context,
    lift: impl Fn(&bloch::Bloch<F>, &[SparseVec<F>]) -> Vec<SparseVec<F>>,
) -> Result<RawSpace<F>, FieldTooSmall> {
    let stage = Stage {
        series: bloch.hermitian.clone(),
        metric: indices.iter().map(|&i| problem.metric[i].clone()).collect(),
    };
    ctx.secular.clear();
    let raw = branches(stage, 0, ctx)?;
    let vectors = raw.iter().map(|b| b.vector.as_ref().map(|c| lift(&bloch, c))).collect();
    Ok(RawSpace {
        bloch,
        branches: raw,
        secular: std::mem::take(&mut ctx.secular),
        vectors,
        omega_support,
    })
}

/// A one-state model space over the rationals: the fraction-free recursion of `fast`.
fn solve_one_state(
    problem: &Problem<Rational>,
    p: usize,
    order: usize,
    states_to: usize,
) -> Result<RawSpace<Rational>, FieldTooSmall> {
    let (bloch, omega_support) = fast::rayleigh_schrodinger(problem, p, order, states_to);
    let energy = bloch.bloch.iter().map(|m| m.get(0, 0).to_ratfunc()).collect();
    let vectors = vec![Some(bloch.omega.iter().map(|cols| cols[0].clone()).collect())];
    let branch = RawBranch {
        energy,
        multiplicity: 1,
        split_at: None,
        vector: None,
        isolated_at: 0,
        not_split: None,
        span: vec![SparseVec::from_pairs(vec![(0, Rational::one())])],
    };
    Ok(RawSpace { bloch, branches: vec![branch], secular: Vec::new(), vectors, omega_support })
}

fn try_convert<F: Scalar>(problem: &Problem<RatFunc>) -> Option<Problem<F>> {
    let conv = |v: &RatFunc| F::from_ratfunc(v);
    Some(Problem {
        energies: problem.energies.iter().map(conv).collect::<Option<_>>()?,
        metric: problem.metric.iter().map(conv).collect::<Option<_>>()?,
        terms: problem.terms.iter().map(|t| t.try_map(conv)).collect::<Option<_>>()?,
    })
}

/// Everything of one model space converted to rational functions, the form every output reads.
struct Solved {
    bloch_h: Vec<DenseMatrix<RatFunc>>,
    hermitian: Vec<DenseMatrix<RatFunc>>,
    omega_support: Vec<BTreeSet<usize>>,
    branches: Vec<RawBranch<RatFunc>>,
    vectors: Vec<Option<Vec<SparseVec<RatFunc>>>>,
    secular: Vec<RawSecular>,
}

/// `rescaled` is the rescaling of a problem solved by `rationalize`, with the state whose scale
/// is kept; coordinates are multiplied back by `d_i / d_p`.
fn to_solved<F: Scalar>(
    raw: RawSpace<F>,
    rescaled: Option<(&fast::Rescaling, usize)>,
    states_to: usize,
) -> Solved {
    let conv_vec = |v: &SparseVec<F>| -> SparseVec<RatFunc> {
        match rescaled {
            None => v.map(|_, x| x.to_ratfunc()),
            Some((scale, p)) => v.map(|i, x| {
                x.to_ratfunc() * RatFunc::constant(Radical::sqrt_of(&scale.square_ratio(i, p)))
            }),
        }
    };
    let omega_support = raw.omega_support;
    let vectors = raw
        .vectors
        .iter()
        .map(|v| v.as_ref().map(|s| s.iter().take(states_to + 1).map(conv_vec).collect()))
        .collect();
    Solved {
        bloch_h: raw.bloch.bloch.iter().map(|m| m.map(F::to_ratfunc)).collect(),
        hermitian: raw.bloch.hermitian.iter().map(|m| m.map(F::to_ratfunc)).collect(),
        omega_support,
        branches: raw
            .branches
            .iter()
            .map(|b| RawBranch {
                energy: b.energy.clone(),
                multiplicity: b.multiplicity,
                split_at: b.split_at,
                vector: None,
                isolated_at: b.isolated_at,
                not_split: b.not_split.clone(),
                span: b.span.iter().map(|v| v.map(|_, x| x.to_ratfunc())).collect(),
            })
            .collect(),
        vectors,
        secular: raw.secular,
    }
}

/// Solves one model space in the smallest field that works.
fn solve_fields(
    working: &Working,
    indices: &[usize],
    order: usize,
    states_to: usize,
    ctx: &mut Context,
) -> Solved {
    if let Some(radical) = working.radical() {
        if indices.len() == 1 {
            if let Some((rational, rescaling)) = working.rational() {
                if let Ok(raw) = solve_one_state(rational, indices[0], order, states_to) {
                    return to_solved(raw, Some((rescaling, indices[0])), states_to);
                }
            }
        }
        if let Ok(raw) = solve_in(radical, indices, order, ctx) {
            // A branch written with an algebraic root has its state only in rational functions, where
            // the root can stand as a symbol: repeat the model space there to get it.
            let n_params = ctx.n_params;
            let mentions_root = |b: &RawBranch<Radical>| {
                b.energy.iter().any(|e| e.params().iter().any(|p| p.0 >= n_params))
            };
            if !raw.branches.iter().any(mentions_root) {
                return to_solved(raw, None, states_to);
            }
        }
    }
    let raw =
        solve_symbolic(working, indices, order, ctx).expect("rational functions hold every value");
    to_solved(raw, None, states_to)
}

#[allow(clippy::too_many_arguments)]
fn solve_model_space(
    states_to: usize,
    model: &Model,
    spectrum: &Spectrum,
    working: &Working,
    levels: &[usize],
    indices: &[usize],
    order: usize,
    ctx: &mut Context,
) -> ModelSpace {
    let solved = solve_fields(working, indices, order, states_to, ctx);
    let n_basis = indices.len();
    // Model-space basis in the product basis, normalized where exact.
    let basis_norms: Vec<RatFunc> =
        indices.iter().map(|&i| working.problem.metric[i].clone()).collect();
    let roots: Option<Vec<RatFunc>> = basis_norms.iter().map(SquareRoot::sqrt).collect();
    let (basis, normalized, effective_hamiltonian, bloch_hamiltonian) = match roots {
        Some(roots) => {
            let basis = indices
                .iter()
                .zip(&roots)
                .map(|(&i, r)| working.columns[i].scale(&r.inv().expect("non-zero norm")))
                .collect();
            // H_ortho[a][b] = H[a][b] sqrt(g_a) / sqrt(g_b).
            let rescale = |m: &DenseMatrix<RatFunc>| {
                let mut res = m.clone();
                for a in 0..n_basis {
                    for b in 0..n_basis {
                        if !m.get(a, b).is_zero() {
                            let v =
                                m.get(a, b).clone() * &roots[a] * roots[b].inv().expect("non-zero");
                            res.set(a, b, v);
                        }
                    }
                }
                res
            };
            (
                basis,
                true,
                solved.hermitian.iter().map(rescale).collect(),
                solved.bloch_h.iter().map(rescale).collect(),
            )
        }
        None => (
            indices.iter().map(|&i| working.columns[i].clone()).collect(),
            false,
            solved.hermitian.clone(),
            solved.bloch_h.clone(),
        ),
    };
    let to_product = |v: &SparseVec<RatFunc>| -> SparseVec<RatFunc> {
        let mut pairs = Vec::new();
        for (i, x) in v.entries() {
            for (p, y) in working.columns[*i].entries() {
                pairs.push((*p, x.clone() * y));
            }
        }
        SparseVec::from_pairs(pairs)
    };
    let branches = solved
        .branches
        .iter()
        .zip(&solved.vectors)
        .map(|(b, vec)| {
            let state = vec.as_ref().and_then(|series| {
                let product: Vec<SparseVec<RatFunc>> = series.iter().map(to_product).collect();
                let state =
                    intermediate_normalization(product, (order - b.isolated_at).min(states_to));
                reduce_state_roots(state, &ctx.roots, ctx.n_params)
            });
            let state_missing = match &state {
                Some(_) => None,
                None if b.multiplicity > 1 || b.not_split.is_some() => {
                    Some(MissingState::GroupNotSplit)
                }
                None => Some(MissingState::Extension),
            };
            let zeroth_order = match &state {
                Some(series) => vec![series.coefficients[0].clone()],
                None => b
                    .span
                    .iter()
                    .map(|v| {
                        let working_vec = SparseVec::from_pairs(
                            v.entries().iter().map(|(a, x)| (indices[*a], x.clone())).collect(),
                        );
                        unit_where_exact(to_product(&working_vec))
                    })
                    .collect(),
            };
            Branch {
                zeroth_order,
                energy: b.energy.clone(),
                multiplicity: b.multiplicity,
                split_at: if n_basis == 1 { None } else { b.split_at.map(|s| s as u32) },
                state,
                state_missing,
                not_split: b.not_split.as_ref().map(|ns| NotSplit {
                    order: b.energy.len() as u32,
                    characteristic: ns.characteristic.clone(),
                    reason: ns.reason.clone(),
                }),
            }
        })
        .collect();
    let notes = notes::truncation_notes(model, working, &solved, order, states_to);
    ModelSpace {
        unperturbed: levels.iter().map(|&l| spectrum.levels[l].energy.clone()).collect(),
        basis,
        normalized,
        basis_norms,
        effective_hamiltonian,
        bloch_hamiltonian,
        branches,
        secular: solved
            .secular
            .iter()
            .map(|s| SecularEquation {
                order: s.order as u32,
                characteristic: s.characteristic.clone(),
                roots: s.roots.clone(),
            })
            .collect(),
        notes,
        operator_form: None,
    }
}

/// A state whose coefficients mention roots of `P` (as free symbols during the computation),
/// reduced so that each root enters as a polynomial of degree below that of `P`.
fn reduce_state_roots(
    state: StateSeries,
    roots: &[RootAtom],
    n_params: u32,
) -> Option<StateSeries> {
    if roots.is_empty() {
        return Some(state);
    }
    let coefficients = state
        .coefficients
        .iter()
        .map(|v| {
            let pairs = v
                .entries()
                .iter()
                .map(|(i, x)| Some((*i, algebraic::reduce_roots(x, roots, n_params)?)))
                .collect::<Option<Vec<_>>>()?;
            Some(SparseVec::from_pairs(pairs))
        })
        .collect::<Option<Vec<_>>>()?;
    Some(StateSeries { coefficients, determined_to: state.determined_to })
}

/// `v` divided by its norm where the norm's square root is exact, else `v`.
fn unit_where_exact(v: SparseVec<RatFunc>) -> SparseVec<RatFunc> {
    let norm = v.conj().dot(&v);
    match norm.sqrt().and_then(|r| r.inv()) {
        Some(inv_root) => v.scale(&inv_root),
        None => v,
    }
}

/// Rescales `psi(lambda)` so that `<psi0|psi(lambda)> = <psi0|psi0>` and keeps orders `0..=keep`.
fn intermediate_normalization(series: Vec<SparseVec<RatFunc>>, keep: usize) -> StateSeries {
    let keep = keep.min(series.len().saturating_sub(1));
    let psi0 = series[0].clone();
    let norm = psi0.conj().dot(&psi0);
    let inv_norm = norm.inv().expect("non-zero vector");
    // c(lambda) = <psi0|psi(lambda)>/<psi0|psi0>, c_0 = 1; psi / c order by order.
    let c: Vec<RatFunc> = series.iter().map(|v| psi0.conj().dot(v) * &inv_norm).collect();
    let mut res: Vec<SparseVec<RatFunc>> = Vec::with_capacity(keep + 1);
    for m in 0..=keep {
        // res_m = series_m - sum_{k=1..m} c_k res_{m-k}.
        let mut acc = series[m].clone();
        for k in 1..=m {
            if !c[k].is_zero() {
                acc = acc.add_scaled(&-c[k].clone(), &res[m - k]);
            }
        }
        res.push(acc);
    }
    // Unit <psi0|psi0> where its square root is exact, so psi^(0) reads as a normalized state.
    if let Some(inv_root) = norm.sqrt().and_then(|r| r.inv()) {
        res = res.iter().map(|v| v.scale(&inv_root)).collect();
    }
    StateSeries { coefficients: res, determined_to: keep as u32 }
}

#[cfg(test)]
mod tests;
