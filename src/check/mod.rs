//! Numeric verification of a derivation against exact diagonalization of `H0 + lambda V`; the
//! only home of `f64`. Start from [`verify`]; [`evaluate`] turns an exact value into a complex
//! number. The diagonalization uses nalgebra, a general-purpose linear-algebra library.

use nalgebra::{DMatrix, SymmetricEigen};

use crate::engine::Derivation;
use crate::exact::{RatFunc, Rational};
use crate::model::Model;

/// Largest product space `cleave check` diagonalizes densely.
pub const MAX_CHECK_DIMENSION: usize = 1200;

/// Options of `cleave check`.
#[derive(Clone, Debug, Default)]
pub struct CheckOptions {
    /// Parameter values by name; parameters not given are set to 1.
    pub at: Vec<(String, Rational)>,
    /// The order N of the series under test; `None` means the derivation's order. A derivation
    /// carried beyond N supplies the next coefficients, which predict the error (see
    /// [`BranchCheck::next_order_ratio`]).
    pub order: Option<u32>,
}

/// The outcome of a numeric verification.
#[derive(Clone, Debug)]
pub struct Verification {
    /// The parameter values used, in declaration order.
    pub at: Vec<(String, f64)>,
    /// One entry per branch in the JSON's order.
    pub branches: Vec<BranchCheck>,
    /// Set when no comparison was possible, with the reason.
    pub skipped: Option<String>,
}

/// The comparison of one branch with exact diagonalization.
#[derive(Clone, Debug)]
pub struct BranchCheck {
    /// Model space index (0-based).
    pub space: usize,
    /// Branch index inside its model space (0-based).
    pub branch: usize,
    /// `(lambda, |E_N(lambda) - E_exact(lambda)|)` at the sampled points.
    pub samples: Vec<(f64, f64)>,
    /// The fitted log–log slope of the error over the points above rounding noise.
    pub slope: Option<f64>,
    /// The slope a correct series of order N shows: `N + 1`.
    pub expected_slope: u32,
    /// A root-test estimate of the radius of convergence in lambda from the last coefficients.
    pub radius: Option<f64>,
    /// At the smallest lambda whose error is resolved, the error divided by the one the next
    /// derived coefficients predict, `|sum_{k>N} E^(k) lambda^k|`: close to 1 when those
    /// coefficients are right as well. `None` when the derivation stops at N.
    pub next_order_ratio: Option<f64>,
    /// Whether the error behaves as a series of order N must: it matches the prediction of the next
    /// coefficients within 10% where resolved, or its fitted slope is at least N + 1/2, or it is at
    /// rounding level everywhere (a series that is exact at this order).
    pub passed: bool,
}

/// Compares every branch of `derivation` with exact diagonalization of `H(lambda)` at the
/// parameter values of `options` over a geometric grid of small `lambda`.
pub fn verify(model: &Model, derivation: &Derivation, options: &CheckOptions) -> Verification {
    let names = model.param_names();
    let params: Vec<f64> = names
        .iter()
        .map(|n| options.at.iter().find(|(m, _)| m == n).map_or(1.0, |(_, v)| v.to_f64()))
        .collect();
    let at: Vec<(String, f64)> = names.iter().cloned().zip(params.iter().copied()).collect();
    let mut symbols = params.clone();
    symbols.extend(derivation.roots.iter().map(|r| r.approximation().to_f64()));
    let n = model.basis().dimension();
    if n > MAX_CHECK_DIMENSION {
        return Verification {
            at,
            branches: Vec::new(),
            skipped: Some(format!(
                "the product space has {n} states; the numeric check diagonalizes at most \
                 {MAX_CHECK_DIMENSION}: lower an oscillator cutoff to check"
            )),
        };
    }
    let complex = std::iter::once(model.h0()).chain(model.perturbations()).any(|op| {
        op.triplets().any(|(_, _, v)| evaluate(v, &params).is_some_and(|(_, im)| im != 0.0))
    });
    // A complex Hermitian A + iB becomes the real symmetric [[A, -B], [B, A]], whose spectrum is
    // that of A + iB with every eigenvalue twice; a real one is used as it is.
    let size = if complex { 2 * n } else { n };
    let operators: Vec<Option<DMatrix<f64>>> = std::iter::once(model.h0())
        .chain(model.perturbations())
        .map(|op| {
            let mut m = DMatrix::zeros(size, size);
            for (r, c, v) in op.triplets() {
                let (re, im) = evaluate(v, &params)?;
                m[(r, c)] = re;
                if complex {
                    m[(r + n, c + n)] = re;
                    m[(r + n, c)] = im;
                    m[(r, c + n)] = -im;
                }
            }
            Some(m)
        })
        .collect();
    let Some(operators) = operators.into_iter().collect::<Option<Vec<_>>>() else {
        return Verification {
            at,
            branches: Vec::new(),
            skipped: Some("an operator entry is undefined at these parameter values".into()),
        };
    };
    let order = options.order.unwrap_or(derivation.order).min(derivation.order);
    let lambdas: Vec<f64> = (0..24).map(|k| 0.5 * 0.7f64.powi(k)).collect();
    let spectra: Vec<Vec<f64>> = lambdas
        .iter()
        .map(|&lambda| {
            let mut h = operators[0].clone();
            for (k, v) in operators.iter().enumerate().skip(1) {
                h += v * lambda.powi(k as i32);
            }
            let mut eig = SymmetricEigen::new(h).eigenvalues.as_slice().to_vec();
            eig.sort_by(f64::total_cmp);
            eig
        })
        .collect();
    let mut branches = Vec::new();
    for (s, space) in derivation.model_spaces.iter().enumerate() {
        for (b, branch) in space.branches.iter().enumerate() {
            let coeffs: Option<Vec<f64>> =
                branch.energy.iter().map(|c| evaluate(c, &symbols).map(|(re, _)| re)).collect();
            let Some(all_coeffs) = coeffs else { continue };
            // The series under test stops at N; what the derivation has beyond predicts its error.
            let cut = all_coeffs.len().min(order as usize + 1);
            let (coeffs, beyond) = all_coeffs.split_at(cut);
            let known = coeffs.len().saturating_sub(1) as u32;
            let samples: Vec<(f64, f64)> = lambdas
                .iter()
                .zip(&spectra)
                .map(|(&lambda, eig)| {
                    let series = coeffs.iter().rev().fold(0.0, |acc, c| acc * lambda + c);
                    let nearest =
                        eig.iter().map(|e| (e - series).abs()).fold(f64::INFINITY, f64::min);
                    (lambda, nearest)
                })
                .collect();
            // Rounding in the diagonalization scales with the energy itself, E_0 + lambda E_1 at
            // the lambda sampled, not with the (possibly huge) high-order coefficients.
            let scale = coeffs.iter().take(2).map(|c| c.abs()).fold(1.0, f64::max);
            let slope = fit_slope(&samples, scale);
            let expected_slope = known + 1;
            let noise_only = samples.iter().all(|(_, e)| *e < 1e-12 * scale);
            let next_order_ratio = (!beyond.is_empty())
                .then(|| {
                    // The smallest lambda whose error is well above rounding.
                    let (lambda, error) = samples
                        .iter()
                        .filter(|(_, e)| *e > 1e-10 * scale)
                        .min_by(|a, b| a.0.total_cmp(&b.0))?;
                    let predicted = beyond
                        .iter()
                        .enumerate()
                        .map(|(k, c)| c * lambda.powi((cut + k) as i32))
                        .sum::<f64>()
                        .abs();
                    (predicted > 0.0).then(|| error / predicted)
                })
                .flatten();
            // A steeper slope only means the next coefficient is small at these values.
            let passed = noise_only
                || next_order_ratio.is_some_and(|r| (r - 1.0).abs() < 0.1)
                || slope.is_some_and(|m| m > f64::from(expected_slope) - 0.5);
            branches.push(BranchCheck {
                space: s,
                branch: b,
                samples,
                slope,
                expected_slope,
                radius: radius_estimate(coeffs),
                next_order_ratio,
                passed,
            });
        }
    }
    Verification { at, branches, skipped: None }
}

/// Least-squares slope of `log(error)` against `log(lambda)` over the smallest `lambda` whose error
/// still lies well above rounding (1e-12 of the energy scale): the asymptotic regime, where
/// the first neglected order dominates. At most six points are used, at least three.
fn fit_slope(samples: &[(f64, f64)], scale: f64) -> Option<f64> {
    let mut above_noise: Vec<(f64, f64)> =
        samples.iter().filter(|(_, e)| *e > 1e-12 * scale).copied().collect();
    above_noise.sort_by(|a, b| a.0.total_cmp(&b.0));
    let points: Vec<(f64, f64)> =
        above_noise.iter().take(6).map(|(l, e)| (l.ln(), e.ln())).collect();
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

/// Root test on the last non-zero coefficients: `r ~ |E_k|^(-1/k)` for the largest such `k`
/// (a heuristic; an asymptotic series shows a radius that shrinks with the order).
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
