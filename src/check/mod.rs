//! Numeric verification of a derivation against exact diagonalization of `H0 + lambda V`; the
//! only home of `f64`. Start from [`run`] (the `cleave check` command: parameter values, a numeric
//! derivation, the comparison) or [`verify`] (the comparison of a given derivation);
//! [`evaluate`] turns an exact value into a complex number.
//!
//! # How a branch is tested
//! A correct series of order N differs from the exact eigenvalue by `sum_{k>N} E^(k) lambda^k`.
//! The derivation is carried a few orders beyond N, so that sum is known up to a tail of relative
//! size `(lambda/rho)^(extra)`, where `rho` is the radius of convergence (from the exceptional
//! points, see `radius`) or, where smaller, the scale at which the coefficients grow. At
//! `lambda = rho/64 ... rho/1024` the exact eigenvalue is found to far more digits than `f64`
//! holds (refined in fixed point from nalgebra's eigenvectors), and the error of the series must
//! equal the predicted sum up to the tail: a coefficient off by one part in a million fails, and a
//! correct series of any order passes, because the working precision grows with the order.

mod hp;
pub mod pade;
mod radius;
mod sweep;

pub use sweep::{sweep, BranchSweep, Sweep, SweepOptions};

use std::collections::BTreeMap;

use nalgebra::{Complex, DMatrix, SymmetricEigen};
use num_traits::{Signed, Zero};

use crate::engine::{self, Derivation, DeriveOptions, EngineError};
use crate::exact::{ParamId, Radical, RatFunc, Rational};
use crate::model::{Model, Operator};
use hp::{Fix, Precision};
pub use radius::Radius;

/// Largest matrix `cleave check` diagonalizes densely, at every point of its grid of
/// [`N_LAMBDAS`] values: the product space, doubled when H(lambda) is complex (see [`verify`]).
/// About ten seconds of diagonalization on a small machine.
pub const MAX_CHECK_DIMENSION: usize = 600;

/// The number of lambda values at which H(lambda) is diagonalized.
pub const N_LAMBDAS: usize = 24;

/// Why `model` is too large to check numerically at the parameter values of `options`, if it is;
/// cheap, so that a caller can ask before deriving anything.
pub fn too_large(model: &Model, options: &CheckOptions) -> Option<String> {
    let params = param_values(model, options);
    let n = model.basis().dimension();
    let complex = n <= MAX_CHECK_DIMENSION && is_complex(model, &params);
    let size = if complex { 2 * n } else { n };
    (size > MAX_CHECK_DIMENSION).then(|| {
        let doubled = if complex { ", doubled because H(lambda) is complex," } else { "" };
        format!(
            "the numeric check diagonalizes a matrix of {size} rows{doubled} at {N_LAMBDAS} values \
             of lambda, and at most {MAX_CHECK_DIMENSION} rows: lower an oscillator cutoff to check"
        )
    })
}

/// The parameter values of `options` in declaration order; those not given are 1.
fn param_values(model: &Model, options: &CheckOptions) -> Vec<f64> {
    model
        .param_names()
        .iter()
        .map(|n| options.at.iter().find(|(m, _)| m == n).map_or(1.0, |(_, v)| v.to_f64()))
        .collect()
}

/// Whether some entry of H0 or a perturbation is complex at these parameter values.
fn is_complex(model: &Model, params: &[f64]) -> bool {
    std::iter::once(model.h0()).chain(model.perturbations()).any(|op| {
        op.triplets().any(|(_, _, v)| evaluate(v, params).is_some_and(|(_, im)| im != 0.0))
    })
}

/// How many orders beyond the one tested `cleave check` derives: they predict the error.
pub const EXTRA_ORDERS: u32 = 4;

/// Options of `cleave check`.
#[derive(Clone, Debug, Default)]
pub struct CheckOptions {
    /// Parameter values by name. [`run`] picks values for the others that keep the level
    /// structure of H0; [`verify`] sets them to 1.
    pub at: Vec<(String, Rational)>,
    /// The order N of the series under test; `None` means the derivation's order. A derivation
    /// carried beyond N supplies the next coefficients, which predict the error.
    pub order: Option<u32>,
}

/// A parameter value used by the check.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct ChosenValue {
    /// The parameter's name.
    pub name: String,
    /// Its exact value.
    pub value: Rational,
    /// Whether the user gave it (`--at`); otherwise the check chose it.
    pub given: bool,
}

/// The outcome of a numeric verification.
#[derive(Clone, Debug)]
pub struct Verification {
    /// The parameter values used, in declaration order, as `f64`.
    pub at: Vec<(String, f64)>,
    /// The exact values used and who chose them (filled by [`run`]).
    pub values: Vec<ChosenValue>,
    /// The order N tested.
    pub order: u32,
    /// Remarks on the whole check (coinciding levels, a radius search left out, ...).
    pub notes: Vec<String>,
    /// One entry per branch in the JSON's order.
    pub branches: Vec<BranchCheck>,
    /// Set when no comparison was possible, with the reason.
    pub skipped: Option<String>,
}

impl Verification {
    /// The branches that were compared (not skipped).
    pub fn n_checked(&self) -> usize {
        self.branches.iter().filter(|b| b.skipped.is_none()).count()
    }
    /// The compared branches that failed.
    pub fn n_failed(&self) -> usize {
        self.branches.iter().filter(|b| b.skipped.is_none() && !b.passed).count()
    }
}

/// The comparison of one branch with exact diagonalization.
#[derive(Clone, Debug)]
pub struct BranchCheck {
    /// Model space index (0-based).
    pub space: usize,
    /// Branch index inside its model space (0-based).
    pub branch: usize,
    /// The order of the series tested: N, or less where the branch's series stops earlier.
    pub tested_order: u32,
    /// `(lambda, |E_N(lambda) - E_exact(lambda)|)` over a wide range of `lambda`, in `f64` (for
    /// the plot; the smallest errors sink under rounding).
    pub samples: Vec<(f64, f64)>,
    /// `(lambda, |E_N(lambda) - E_exact(lambda)|)` with the eigenvalue refined far beyond `f64`.
    pub precise: Vec<(f64, f64)>,
    /// The log–log slope of the precise errors.
    pub slope: Option<f64>,
    /// The slope a correct series of order N shows: `N + 1` (more when the next coefficients
    /// vanish).
    pub expected_slope: u32,
    /// The radius of convergence in lambda from the exceptional points of `H(lambda)`.
    pub radius: Option<Radius>,
    /// A root-test estimate `|E_k|^(-1/k)` from the last coefficient, a cross-check only.
    pub root_test: Option<f64>,
    /// The error divided by the one the derived coefficients beyond N predict, at the largest
    /// precise `lambda` (1 when they are right too); `None` when none are derived.
    pub next_order_ratio: Option<f64>,
    /// The largest deviation of the error from its prediction, relative to the prediction.
    pub deviation: Option<f64>,
    /// Whether the error is what a correct series of this order leaves.
    pub passed: bool,
    /// Why the branch was not compared, when it was not.
    pub skipped: Option<String>,
    /// Why the tested order is below N, when it is.
    pub shortened: Option<String>,
    /// Diagonal Padé approximants against exact diagonalization (see [`pade`]).
    pub pade: Vec<pade::PadeRow>,
}

/// Runs `cleave check`: picks values for the parameters `options.at` leaves open (keeping the
/// level structure of H0), substitutes them (exact rationals) so the series is derived
/// numerically, `EXTRA_ORDERS` beyond the tested order, and compares it with diagonalization.
pub fn run(
    model: &Model,
    options: &CheckOptions,
) -> Result<(Derivation, Verification), EngineError> {
    let tested = options.order.or(model.order()).unwrap_or(2);
    let (values, mut notes) = choose_values(model, &options.at);
    let numeric = substitute(model, &values).ok_or_else(|| {
        EngineError::Infeasible(
            "an operator entry has a vanishing denominator at the values used; choose others \
             with --at"
                .into(),
        )
    })?;
    let extra = EXTRA_ORDERS.min(engine::MAX_ORDER.saturating_sub(tested));
    let derive_options = DeriveOptions { order: tested + extra, states: Some(0) };
    // Where the extra orders are beyond reach, the series is tested by its slope alone.
    let derivation = match engine::derive(&numeric, &derive_options) {
        Ok(derivation) => derivation,
        Err(_) if extra > 0 => {
            notes.push(format!(
                "the series could not be derived {extra} orders further to predict its error; \
                 each branch is tested by the slope of its error alone"
            ));
            engine::derive(&numeric, &DeriveOptions { order: tested, states: Some(0) })?
        }
        Err(err) => return Err(err),
    };
    let mut verification =
        verify(&numeric, &derivation, &CheckOptions { at: Vec::new(), order: Some(tested) });
    verification.at = values.iter().map(|v| (v.name.clone(), v.value.to_f64())).collect();
    verification.values = values;
    notes.append(&mut verification.notes);
    verification.notes = notes;
    Ok((derivation, verification))
}

/// Values for every parameter: the given ones, and for the others distinct rationals (positive
/// where declared `> 0`, as every choice here is) chosen so that H0 keeps as many distinct
/// levels as it has for general values. The notes say where that was impossible.
pub fn choose_values(model: &Model, at: &[(String, Rational)]) -> (Vec<ChosenValue>, Vec<String>) {
    let params = model.params();
    let general = crate::spectrum::unperturbed_levels(model).ok().map(|s| s.levels.len());
    let mut notes = Vec::new();
    let open = params.iter().filter(|p| !at.iter().any(|(n, _)| *n == p.name)).count();
    let mut last = Vec::new();
    for attempt in 0..40u64 {
        let mut values: Vec<ChosenValue> = Vec::new();
        for (k, p) in params.iter().enumerate() {
            if let Some((_, v)) = at.iter().find(|(n, _)| *n == p.name) {
                values.push(ChosenValue { name: p.name.clone(), value: v.clone(), given: true });
                continue;
            }
            let mut x = attempt.wrapping_mul(7919).wrapping_add(k as u64 * 104_729) ^ 0x5bd1;
            loop {
                x = x
                    .wrapping_mul(6_364_136_223_846_793_005)
                    .wrapping_add(1_442_695_040_888_963_407);
                let numer = 7 + ((x >> 33) % 23) as i64;
                let denom = [8, 9, 11, 13][((x >> 20) % 4) as usize];
                let value = Rational::ratio(numer, denom).expect("non-zero denominator");
                if !values.iter().any(|v| v.value == value) {
                    values.push(ChosenValue { name: p.name.clone(), value, given: false });
                    break;
                }
            }
        }
        let levels = substitute_operator(model.h0(), &values)
            .and_then(|h0| crate::spectrum::spectrum_of(&h0, &[]).ok().map(|s| s.levels.len()));
        let keeps = match (general, levels) {
            (Some(g), Some(l)) => l >= g,
            (None, Some(_)) => true,
            _ => false,
        };
        last = values;
        if keeps || open == 0 {
            if !keeps {
                notes.push(format!(
                    "at the values given H0 has {} distinct levels where it has {} in general: \
                     levels that coincide here are treated as one",
                    levels.map_or("?".to_string(), |l| l.to_string()),
                    general.map_or("?".to_string(), |g| g.to_string())
                ));
            }
            return (last, notes);
        }
    }
    notes.push("no values were found that keep every H0 level distinct".into());
    (last, notes)
}

fn substitute_value(value: &RatFunc, values: &[ChosenValue]) -> Option<RatFunc> {
    let mut res = value.clone();
    for (k, v) in values.iter().enumerate() {
        if res.params().contains(&ParamId(k as u32)) {
            res = res.eval_param(ParamId(k as u32), &Radical::from(v.value.clone()))?;
        }
    }
    Some(res)
}

fn substitute_operator(op: &Operator, values: &[ChosenValue]) -> Option<Operator> {
    op.try_map(|v| substitute_value(v, values))
}

/// The model with every parameter replaced by its value: numeric, without parameters; `None` when
/// an entry's denominator vanishes at these values.
pub fn substitute(model: &Model, values: &[ChosenValue]) -> Option<Model> {
    let h0 = substitute_operator(model.h0(), values)?;
    let perturbations = model
        .perturbations()
        .iter()
        .map(|v| substitute_operator(v, values))
        .collect::<Option<Vec<_>>>()?;
    let focus = model
        .focus()
        .iter()
        .map(|line| line.iter().map(|e| substitute_value(e, values)).collect::<Option<Vec<_>>>())
        .collect::<Option<Vec<_>>>()?;
    Model::new(Vec::new(), model.basis().clone(), h0, perturbations, focus, model.order()).ok()
}

/// `H(lambda)` in `f64` and in fixed point, as a real symmetric matrix (a complex Hermitian
/// `A + iB` becomes `[[A, -B], [B, A]]`, whose spectrum is that of `A + iB` with every eigenvalue
/// twice).
struct Operators {
    size: usize,
    dense: Vec<DMatrix<f64>>,
    /// Per term, the non-zero entries `(row, col, value)`.
    exact: Vec<Vec<(usize, usize, Fix)>>,
    /// The terms as complex matrices of the original size (for the exceptional points).
    complex: Vec<DMatrix<Complex<f64>>>,
    prec: Precision,
    /// `f64` eigen-decompositions by `lambda`.
    cache: BTreeMap<u64, SymmetricEigen<f64, nalgebra::Dyn>>,
}

impl Operators {
    fn h_dense(&self, lambda: f64) -> DMatrix<f64> {
        let mut h = self.dense[0].clone();
        for (k, v) in self.dense.iter().enumerate().skip(1) {
            h += v * lambda.powi(k as i32);
        }
        h
    }
    fn eigen(&mut self, lambda: f64) -> &SymmetricEigen<f64, nalgebra::Dyn> {
        let key = lambda.to_bits();
        if !self.cache.contains_key(&key) {
            let eig = SymmetricEigen::new(self.h_dense(lambda));
            self.cache.insert(key, eig);
        }
        &self.cache[&key]
    }
    /// Follows the eigenvalue `value` of `H(start)`, of slope `slope` there, along the real axis
    /// to `end` (64 steps, each taking the eigenvalue nearest the linear extrapolation).
    fn follow_real(&mut self, start: f64, (value, slope): (f64, f64), end: f64) -> Option<f64> {
        let mut current = (start, value);
        let mut prev = (start - 1.0, value - slope);
        for k in 1..=64 {
            let lambda = start + (end - start) * f64::from(k) / 64.0;
            let predicted =
                current.1 + (current.1 - prev.1) * (lambda - current.0) / (current.0 - prev.0);
            let next = self
                .eigen(lambda)
                .eigenvalues
                .iter()
                .copied()
                .min_by(|a, b| (a - predicted).abs().total_cmp(&(b - predicted).abs()))?;
            prev = current;
            current = (lambda, next);
        }
        Some(current.1)
    }
    /// The entries of `H(lambda)` in fixed point.
    fn h_exact(&self, lambda: &Fix) -> Vec<(usize, usize, Fix)> {
        let mut acc: BTreeMap<(usize, usize), Fix> = BTreeMap::new();
        let mut power = self.prec.one();
        for (k, term) in self.exact.iter().enumerate() {
            if k > 0 {
                power = self.prec.mul(&power, lambda);
            }
            for (r, c, v) in term {
                *acc.entry((*r, *c)).or_default() += self.prec.mul(v, &power);
            }
        }
        acc.into_iter().map(|((r, c), v)| (r, c, v)).collect()
    }
}

/// Compares every branch of `derivation` with exact diagonalization of `H(lambda)` at the
/// parameter values of `options` (others 1).
pub fn verify(model: &Model, derivation: &Derivation, options: &CheckOptions) -> Verification {
    let names = model.param_names();
    let exact_params: Vec<Rational> = names
        .iter()
        .map(|n| {
            options
                .at
                .iter()
                .find(|(m, _)| m == n)
                .map_or(Rational::from_i64(1), |(_, v)| v.clone())
        })
        .collect();
    let params: Vec<f64> = exact_params.iter().map(Rational::to_f64).collect();
    let at: Vec<(String, f64)> = names.iter().cloned().zip(params.iter().copied()).collect();
    let order = options.order.unwrap_or(derivation.order).min(derivation.order);
    let mut res = Verification {
        at,
        values: Vec::new(),
        order,
        notes: Vec::new(),
        branches: Vec::new(),
        skipped: None,
    };
    let n = model.basis().dimension();
    if n > MAX_CHECK_DIMENSION {
        res.skipped = Some(format!(
            "the product space has {n} states; the numeric check diagonalizes at most \
             {MAX_CHECK_DIMENSION}: lower an oscillator cutoff to check"
        ));
        return res;
    }
    let mut symbols = params.clone();
    symbols.extend(derivation.roots.iter().map(|r| r.approximation().to_f64()));
    let highest = derivation
        .model_spaces
        .iter()
        .flat_map(|s| &s.branches)
        .map(|b| b.energy.len())
        .max()
        .unwrap_or(1) as u32;
    // lambda goes down to rho/1024 = rho * 2^-10: each order costs ten bits, plus room for the
    // size of the energies and the rounding of the refinement.
    let prec = Precision { bits: 10 * (highest + 2) + 160 };
    let mut exact_symbols: Vec<Fix> = exact_params.iter().map(|v| prec.of_rational(v)).collect();
    exact_symbols.extend(
        derivation.roots.iter().map(|r| prec.root_in(&r.polynomial, &r.interval.0, &r.interval.1)),
    );
    let terms: Vec<&Operator> = std::iter::once(model.h0()).chain(model.perturbations()).collect();
    let complex_model = terms.iter().any(|op| {
        op.triplets().any(|(_, _, v)| evaluate(v, &params).is_some_and(|(_, im)| im != 0.0))
    });
    let size = if complex_model { 2 * n } else { n };
    let mut dense = Vec::new();
    let mut exact = Vec::new();
    let mut complex = Vec::new();
    for op in &terms {
        let mut m = DMatrix::zeros(size, size);
        let mut c = DMatrix::from_element(n, n, Complex::new(0.0, 0.0));
        let mut e = Vec::new();
        for (r, col, v) in op.triplets() {
            let (Some((re, im)), Some(x)) = (evaluate(v, &params), prec.eval(v, &exact_symbols))
            else {
                res.skipped =
                    Some("an operator entry is undefined at these parameter values".into());
                return res;
            };
            m[(r, col)] = re;
            c[(r, col)] = Complex::new(re, im);
            e.push((r, col, x.re.clone()));
            if complex_model {
                m[(r + n, col + n)] = re;
                m[(r + n, col)] = im;
                m[(r, col + n)] = -im;
                e.push((r + n, col + n, x.re));
                e.push((r + n, col, x.im.clone()));
                e.push((r, col + n, -x.im));
            }
        }
        dense.push(m);
        exact.push(e);
        complex.push(c);
    }
    let mut ops = Operators { size, dense, exact, complex, prec, cache: BTreeMap::new() };
    // The size of the energies: of H0, and of H(1) where H0 alone is zero or small.
    let scale = [0.0, 1.0]
        .iter()
        .flat_map(|&l| ops.eigen(l).eigenvalues.iter().map(|e| e.abs()).collect::<Vec<_>>())
        .fold(1e-300f64, f64::max);
    let mut blocks = radius::Blocks::new(&ops.complex, scale);
    for (s, space) in derivation.model_spaces.iter().enumerate() {
        for (b, branch) in space.branches.iter().enumerate() {
            let check = check_branch(
                &mut ops,
                &mut blocks,
                (s, b),
                &branch.energy,
                branch.not_split.is_some(),
                order,
                (&symbols, &exact_symbols),
                scale,
            );
            res.branches.push(check);
        }
    }
    res
}

#[allow(clippy::too_many_arguments)]
fn check_branch(
    ops: &mut Operators,
    blocks: &mut radius::Blocks,
    (space, branch): (usize, usize),
    energy: &[RatFunc],
    not_split: bool,
    order: u32,
    (symbols, exact_symbols): (&[f64], &[Fix]),
    scale: f64,
) -> BranchCheck {
    let prec = ops.prec;
    let mut res = BranchCheck {
        space,
        branch,
        tested_order: order,
        samples: Vec::new(),
        precise: Vec::new(),
        slope: None,
        expected_slope: order + 1,
        radius: None,
        root_test: None,
        next_order_ratio: None,
        deviation: None,
        passed: false,
        skipped: None,
        shortened: None,
        pade: Vec::new(),
    };
    let coeffs: Option<Vec<f64>> =
        energy.iter().map(|c| evaluate(c, symbols).map(|(re, _)| re)).collect();
    let exact: Option<Vec<Fix>> =
        energy.iter().map(|c| prec.eval(c, exact_symbols).map(|x| x.re)).collect();
    let (Some(coeffs), Some(exact)) = (coeffs, exact) else {
        res.skipped =
            Some("a coefficient has a vanishing denominator at these parameter values".into());
        return res;
    };
    if coeffs.iter().any(|c| !c.is_finite()) {
        res.skipped = Some("a coefficient is not finite at these parameter values".into());
        return res;
    }
    let highest = coeffs.len() - 1;
    let tested = (order as usize).min(highest);
    if tested < order as usize {
        res.shortened = Some(if not_split {
            format!(
                "its group's secular matrix is not split exactly at order {}: the series stops \
                 at order {tested}",
                tested + 1
            )
        } else {
            format!("the series stops at order {tested}")
        });
    }
    res.tested_order = tested as u32;
    // The first non-zero coefficient beyond the tested order sets the expected slope.
    let next_nonzero = (tested + 1..=highest).find(|&k| coeffs[k] != 0.0);
    res.expected_slope = next_nonzero.unwrap_or(tested + 1) as u32;
    // The scale at which the terms grow: every |E_k| rho^k stays below the gap from E^(0) to the
    // nearest other unperturbed level.
    let gap = {
        let e0 = coeffs[0];
        let eig = ops.eigen(0.0);
        eig.eigenvalues
            .iter()
            .map(|e| (e - e0).abs())
            .filter(|d| *d > 1e-9 * scale)
            .fold(f64::INFINITY, f64::min)
    };
    let gap = if gap.is_finite() { gap } else { scale };
    let rho_coeff = (1..=highest)
        .filter(|&k| coeffs[k] != 0.0)
        .map(|k| (coeffs[k].abs() / gap).powf(-1.0 / k as f64))
        .fold(f64::INFINITY, f64::min);
    let rho_coeff = if rho_coeff.is_finite() { rho_coeff } else { 1.0 };
    res.root_test = radius_estimate(&coeffs);
    let start = rho_coeff / 64.0;
    let start_value = coeffs.iter().rev().fold(0.0, |acc, c| acc * start + c);
    if let Some(spectra) = blocks.block_of(start, start_value) {
        let limit = 4.0 * rho_coeff;
        res.radius = Some(radius::branch_radius(spectra, &coeffs, start, limit));
    }
    let rho = match res.radius {
        Some(Radius::At(r)) => r.min(rho_coeff),
        _ => rho_coeff,
    };
    // A power of two at or below rho, so the sampled lambda are exact in fixed point.
    let top = 2f64.powi(rho.log2().floor() as i32);
    let envelope = (0..=highest).map(|k| coeffs[k].abs() * rho.powi(k as i32)).fold(0.0, f64::max);
    let noise = prec.to_f64(&Fix::from(1u32)) * 2f64.powi(48) * scale.max(1.0) * ops.size as f64;
    let mut all_ok = true;
    let mut deviation: f64 = 0.0;
    for j in 6..=10 {
        let lambda = top * 2f64.powi(-j);
        let lambda_fix = prec.of_f64(lambda);
        let series = horner(prec, &exact[..=tested], &lambda_fix);
        let Some(eigenvalue) = precise_eigenvalue(ops, lambda, &lambda_fix, &series, scale) else {
            res.skipped = Some("the exact eigenvalue could not be refined at these values".into());
            return res;
        };
        let error = &eigenvalue - &series;
        let predicted = horner(prec, &exact, &lambda_fix) - &series;
        let error_f = prec.to_f64(&error);
        let predicted_f = prec.to_f64(&predicted);
        let tail = 10.0 * envelope * (lambda / rho).powi(highest as i32 + 1) / (1.0 - lambda / rho);
        let miss = prec.to_f64(&(&error - &predicted)).abs();
        let allowed = 1e-9 * predicted_f.abs() + tail + noise;
        if highest > tested {
            all_ok &= miss <= allowed;
            if predicted_f != 0.0 {
                deviation = deviation.max(miss / predicted_f.abs());
            }
        }
        res.precise.push((lambda, error_f.abs()));
        if j == 6 && predicted_f != 0.0 {
            res.next_order_ratio = Some(error_f.abs() / predicted_f.abs());
        }
    }
    res.precise.reverse();
    res.deviation = (highest > tested && deviation > 0.0).then_some(deviation);
    res.slope = fit_slope(&res.precise, noise);
    res.passed = if highest > tested {
        all_ok
    } else {
        // Nothing beyond the series is known: the error must fall at least like lambda^(N+1).
        res.precise.iter().all(|(_, e)| *e <= noise)
            || res.slope.is_some_and(|m| m > tested as f64 + 0.75)
    };
    // f64 errors over a wide range, for the plot.
    for j in 0..=40 {
        let lambda = top * 2f64.powf(-f64::from(j) / 2.0);
        let value = coeffs[..=tested].iter().rev().fold(0.0, |acc, c| acc * lambda + c);
        let nearest = ops
            .eigen(lambda)
            .eigenvalues
            .iter()
            .map(|e| (e - value).abs())
            .fold(f64::INFINITY, f64::min);
        if nearest > 0.0 {
            res.samples.push((lambda, nearest));
        }
    }
    res.samples.reverse();
    if ops.size <= radius::MAX_RADIUS_DIMENSION {
        let start = top / 64.0;
        let start_value = coeffs.iter().rev().fold(0.0, |acc, c| acc * start + c);
        let start_slope = coeffs
            .iter()
            .enumerate()
            .skip(1)
            .rev()
            .fold(0.0, |acc, (k, c)| acc * start + k as f64 * c);
        res.pade = pade::rows(&coeffs, tested, rho, |lambda| {
            ops.follow_real(start, (start_value, start_slope), lambda)
        });
    }
    res
}

fn horner(prec: Precision, coeffs: &[Fix], x: &Fix) -> Fix {
    coeffs.iter().rev().fold(Fix::zero(), |acc, c| prec.mul(&acc, x) + c)
}

/// The eigenvalue of `H(lambda)` nearest `target`, refined in fixed point: the invariant subspace
/// of the eigenvalues `f64` cannot tell apart from the target is improved by Newton steps whose
/// residuals are exact and whose corrections use nalgebra's eigenvectors (Dongarra, Moler &
/// Wilkinson, Improving the accuracy of computed eigenvalues and eigenvectors, SIAM J. Numer.
/// Anal. 20, 23, 1983), then the small matrix on that subspace is diagonalized by Jacobi
/// rotations in fixed point.
fn precise_eigenvalue(
    ops: &mut Operators,
    lambda: f64,
    lambda_fix: &Fix,
    target: &Fix,
    scale: f64,
) -> Option<Fix> {
    let prec = ops.prec;
    let size = ops.size;
    let h = ops.h_exact(lambda_fix);
    let target_f = prec.to_f64(target);
    let eig = ops.eigen(lambda).clone();
    let values = eig.eigenvalues.as_slice();
    let nearest = values.iter().map(|e| (e - target_f).abs()).fold(f64::INFINITY, f64::min);
    let reach = 1e-6 * scale + 2.0 * nearest;
    let cluster: Vec<usize> =
        (0..size).filter(|&j| (values[j] - target_f).abs() <= reach).collect();
    if cluster.is_empty() {
        return None;
    }
    let outside: Vec<usize> = (0..size).filter(|j| !cluster.contains(j)).collect();
    let m = cluster.len();
    let mut x: Vec<Vec<Fix>> = cluster
        .iter()
        .map(|&j| eig.eigenvectors.column(j).iter().map(|v| prec.of_f64(*v)).collect())
        .collect();
    let mean = cluster.iter().map(|&j| values[j]).sum::<f64>() / m as f64;
    let noise = prec.to_f64(&Fix::from(1u32)) * 2f64.powi(40) * scale.max(1.0);
    let apply = |v: &[Fix]| -> Vec<Fix> {
        let mut out = vec![Fix::zero(); size];
        for (r, c, a) in &h {
            if !v[*c].is_zero() {
                out[*r] += prec.mul(a, &v[*c]);
            }
        }
        out
    };
    for _ in 0..(prec.bits / 16 + 8) {
        orthonormalize(prec, &mut x);
        let images: Vec<Vec<Fix>> = x.iter().map(|v| apply(v)).collect();
        let mut largest: f64 = 0.0;
        let mut corrections = Vec::with_capacity(m);
        for image in &images {
            // r = H x_a - sum_b x_b <x_b, H x_a>.
            let mut r = image.clone();
            for xb in &x {
                let theta = dot(prec, xb, image);
                for (ri, xi) in r.iter_mut().zip(xb) {
                    *ri -= prec.mul(&theta, xi);
                }
            }
            let rf: Vec<f64> = r.iter().map(|v| prec.to_f64(v)).collect();
            largest = rf.iter().fold(largest, |l, v| l.max(v.abs()));
            let mut delta = vec![0.0f64; size];
            for &j in &outside {
                let u = eig.eigenvectors.column(j);
                let coeff = u.iter().zip(&rf).map(|(a, b)| a * b).sum::<f64>() / (mean - values[j]);
                for (d, ui) in delta.iter_mut().zip(u.iter()) {
                    *d += coeff * ui;
                }
            }
            corrections.push(delta);
        }
        if largest <= noise {
            break;
        }
        for (xa, delta) in x.iter_mut().zip(&corrections) {
            for (xi, d) in xa.iter_mut().zip(delta) {
                *xi += prec.of_f64(*d);
            }
        }
    }
    orthonormalize(prec, &mut x);
    let images: Vec<Vec<Fix>> = x.iter().map(|v| apply(v)).collect();
    let small: Vec<Vec<Fix>> =
        (0..m).map(|a| (0..m).map(|b| dot(prec, &x[a], &images[b])).collect()).collect();
    let small: Vec<Vec<Fix>> =
        (0..m).map(|a| (0..m).map(|b| (&small[a][b] + &small[b][a]) / 2).collect()).collect();
    hp::symmetric_eigenvalues(prec, small)
        .into_iter()
        .min_by(|a, b| (a - target).abs().cmp(&(b - target).abs()))
}

fn dot(prec: Precision, a: &[Fix], b: &[Fix]) -> Fix {
    let mut acc = Fix::zero();
    for (x, y) in a.iter().zip(b) {
        if !x.is_zero() && !y.is_zero() {
            acc += x * y;
        }
    }
    acc >> prec.bits
}

/// Modified Gram–Schmidt in fixed point.
fn orthonormalize(prec: Precision, x: &mut [Vec<Fix>]) {
    for a in 0..x.len() {
        for b in 0..a {
            let (done, rest) = x.split_at_mut(a);
            let overlap = dot(prec, &done[b], &rest[0]);
            for (xi, yi) in rest[0].iter_mut().zip(&done[b]) {
                *xi -= prec.mul(&overlap, yi);
            }
        }
        let norm = prec.sqrt(&dot(prec, &x[a], &x[a]));
        if !norm.is_zero() {
            for xi in x[a].iter_mut() {
                *xi = prec.div(xi, &norm).expect("non-zero norm");
            }
        }
    }
}

/// Least-squares slope of `log(error)` against `log(lambda)` over the points above `noise`.
fn fit_slope(samples: &[(f64, f64)], noise: f64) -> Option<f64> {
    let points: Vec<(f64, f64)> =
        samples.iter().filter(|(_, e)| *e > noise).map(|(l, e)| (l.ln(), e.ln())).collect();
    if points.len() < 3 {
        return None;
    }
    let k = points.len() as f64;
    let (sx, sy) = points.iter().fold((0.0, 0.0), |(a, b), (x, y)| (a + x, b + y));
    let (mx, my) = (sx / k, sy / k);
    let (sxy, sxx) = points
        .iter()
        .fold((0.0, 0.0), |(a, b), (x, y)| (a + (x - mx) * (y - my), b + (x - mx).powi(2)));
    (sxx > 0.0).then(|| sxy / sxx)
}

/// Root test on the last non-zero coefficient: `r ~ |E_k|^(-1/k)` for the largest such `k`
/// (a heuristic that can lie on either side of the true radius; a cross-check only).
fn radius_estimate(coeffs: &[f64]) -> Option<f64> {
    let (k, c) = coeffs.iter().enumerate().skip(1).rev().find(|(_, c)| c.abs() > 0.0)?;
    if k < 2 {
        return None;
    }
    Some(c.abs().powf(-1.0 / k as f64))
}

/// The value of `value` at the parameter values `params` (indexed by `ParamId`), as `(re, im)`;
/// `None` where the denominator vanishes.
pub fn evaluate(value: &RatFunc, params: &[f64]) -> Option<(f64, f64)> {
    let numer = evaluate_poly(value.numer(), params);
    let denom = evaluate_poly(value.denom(), params);
    let norm = denom.0 * denom.0 + denom.1 * denom.1;
    if norm == 0.0 {
        return None;
    }
    Some((
        (numer.0 * denom.0 + numer.1 * denom.1) / norm,
        (numer.1 * denom.0 - numer.0 * denom.1) / norm,
    ))
}

/// The values of every symbol of `derivation` (its parameters from `at`, then its algebraic roots),
/// indexed like the symbols values mention; `None` when a parameter has no value in `at`.
pub fn symbol_values(derivation: &Derivation, at: &[(String, Rational)]) -> Option<Vec<f64>> {
    let mut values: Vec<f64> = derivation
        .parameters
        .iter()
        .map(|n| at.iter().find(|(m, _)| m == n).map(|(_, v)| v.to_f64()))
        .collect::<Option<_>>()?;
    values.extend(derivation.roots.iter().map(|r| r.approximation().to_f64()));
    Some(values)
}

/// Like [`evaluate`] with values given by parameter name; parameters without a value are `None`.
pub fn evaluate_named(
    value: &RatFunc,
    names: &[String],
    at: &[(String, Rational)],
) -> Option<(f64, f64)> {
    let params: Option<Vec<f64>> =
        names.iter().map(|n| at.iter().find(|(m, _)| m == n).map(|(_, v)| v.to_f64())).collect();
    evaluate(value, &params?)
}

fn evaluate_poly(poly: &crate::exact::Poly, params: &[f64]) -> (f64, f64) {
    let (mut re, mut im) = (0.0, 0.0);
    for (monomial, coeff) in poly.terms() {
        let mut factor = 1.0;
        for (p, e) in monomial.factors() {
            // A symbol without a value (a root the caller did not supply) makes the value NaN.
            factor *= params.get(p.0 as usize).copied().unwrap_or(f64::NAN).powi(*e as i32);
        }
        for (s, c) in coeff.terms() {
            let root = s.abs().to_f64().sqrt() * c.to_f64() * factor;
            if s.is_negative() {
                im += root;
            } else {
                re += root;
            }
        }
    }
    (re, im)
}

#[cfg(test)]
mod tests {
    use super::*;

    /// `Field` is used by the substitution; this keeps the import honest.
    #[test]
    fn substitution_of_a_constant_is_itself() {
        let v = <RatFunc as crate::exact::Field>::from_rational(&Rational::from_i64(3));
        assert_eq!(substitute_value(&v, &[]), Some(v));
    }
}
