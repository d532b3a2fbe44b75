//! The numbers behind a level diagram: exact diagonalization of `H(lambda)` and the partial sums
//! of every branch's series over a range of `lambda`. Start from [`sweep`]; `emit` draws the
//! result.

use nalgebra::{DMatrix, SymmetricEigen};

use super::{evaluate, MAX_CHECK_DIMENSION};
use crate::engine::Derivation;
use crate::exact::Rational;
use crate::model::Model;

/// Options of [`sweep`].
#[derive(Clone, Debug, Default)]
pub struct SweepOptions {
    /// Parameter values by name; parameters not given are set to 1.
    pub at: Vec<(String, Rational)>,
    /// The highest order drawn; `None` means the derivation's order.
    pub order: Option<u32>,
    /// The largest `lambda`; `None` chooses 1.5 times the smallest estimated radius of
    /// convergence, at most 1.
    pub lambda_max: Option<f64>,
    /// Sweep this parameter over `(name, from, to)` at `lambda = 1`, the others as in `at`,
    /// instead of sweeping `lambda`.
    pub against: Option<(String, f64, f64)>,
    /// Points on the horizontal axis (at least 2; default 121).
    pub points: Option<usize>,
}

/// Exact levels and series over a range of `lambda` or of one parameter.
#[derive(Clone, Debug)]
pub struct Sweep {
    /// The parameter values used, in declaration order (the swept one at its first value).
    pub at: Vec<(String, f64)>,
    /// What the horizontal axis is: `lambda`, or the swept parameter's name.
    pub axis: String,
    /// The sampled values of the horizontal axis, ascending.
    pub axis_values: Vec<f64>,
    /// The eigenvalues of `H(lambda)` at each sampled point, ascending.
    pub exact: Vec<Vec<f64>>,
    /// One entry per branch in the JSON's order.
    pub branches: Vec<BranchSweep>,
    /// Against `lambda`: the smallest root-test estimate of the radius of convergence over the
    /// branches.
    pub radius: Option<f64>,
    /// Set when nothing could be computed, with the reason.
    pub skipped: Option<String>,
}

/// The series of one branch over the sampled points.
#[derive(Clone, Debug)]
pub struct BranchSweep {
    /// Model space index (0-based).
    pub space: usize,
    /// Branch index inside its model space (0-based).
    pub branch: usize,
    /// `partial_sums[k][j]` is the series to order `k` at the `j`-th point, `k = 0..=N`.
    pub partial_sums: Vec<Vec<f64>>,
    /// The index (in ascending order) of the exact eigenvalue the branch starts on.
    pub exact_index: Option<usize>,
}

/// Diagonalizes `H(lambda)` on a grid and sums every branch's series order by order.
pub fn sweep(model: &Model, derivation: &Derivation, options: &SweepOptions) -> Sweep {
    let names = model.param_names();
    let params: Vec<f64> = names
        .iter()
        .map(|n| options.at.iter().find(|(m, _)| m == n).map_or(1.0, |(_, v)| v.to_f64()))
        .collect();
    let swept = options
        .against
        .as_ref()
        .map(|(name, from, to)| (names.iter().position(|n| n == name), name.clone(), *from, *to));
    let mut at: Vec<(String, f64)> = names.iter().cloned().zip(params.iter().copied()).collect();
    if let Some((Some(k), _, from, _)) = &swept {
        at[*k].1 = *from;
    }
    let axis = swept.as_ref().map_or("lambda".to_string(), |(_, name, _, _)| name.clone());
    let empty = |why: String| Sweep {
        at: at.clone(),
        axis: axis.clone(),
        axis_values: Vec::new(),
        exact: Vec::new(),
        branches: Vec::new(),
        radius: None,
        skipped: Some(why),
    };
    if let Some((None, name, _, _)) = &swept {
        return empty(format!("the model has no parameter `{name}` to sweep"));
    }
    let n = model.basis().dimension();
    if n > MAX_CHECK_DIMENSION {
        return empty(format!(
            "the product space has {n} states; the diagram diagonalizes at most \
             {MAX_CHECK_DIMENSION}: lower an oscillator cutoff"
        ));
    }
    let order = options.order.unwrap_or(derivation.order).min(derivation.order) as usize;
    let roots: Vec<f64> = derivation.roots.iter().map(|r| r.approximation().to_f64()).collect();
    // The coefficients of every branch at the given parameter values, to order N.
    let coefficients = |params: &[f64]| -> Option<Vec<Vec<f64>>> {
        let mut symbols = params.to_vec();
        symbols.extend(&roots);
        let mut res = Vec::new();
        for space in &derivation.model_spaces {
            for branch in &space.branches {
                let mut coeffs = branch
                    .energy
                    .iter()
                    .map(|c| evaluate(c, &symbols).map(|(re, _)| re))
                    .collect::<Option<Vec<f64>>>()?;
                coeffs.truncate(order + 1);
                res.push(coeffs);
            }
        }
        Some(res)
    };
    let Some(at_start) = coefficients(&params) else {
        return empty("a branch is undefined at these parameter values".into());
    };
    let radius = match swept {
        Some(_) => None,
        None => at_start.iter().filter_map(|c| root_test(c)).reduce(f64::min),
    };
    let points = options.points.unwrap_or(121).max(2);
    let (from, to) = match &swept {
        Some((_, _, from, to)) => (*from, *to),
        None => {
            let lambda_max = options
                .lambda_max
                .filter(|l| l.is_finite() && *l > 0.0)
                .unwrap_or_else(|| radius.map_or(1.0, |r| (1.5 * r).min(1.0)));
            (0.0, lambda_max)
        }
    };
    let axis_values: Vec<f64> =
        (0..points).map(|j| from + (to - from) * j as f64 / (points - 1) as f64).collect();
    // Per point: lambda, the exact spectrum and every branch's coefficients.
    let mut exact = Vec::with_capacity(points);
    let mut coefficients_at = Vec::with_capacity(points);
    let fixed_operators = match swept {
        Some(_) => None,
        None => match real_symmetric(model, &params) {
            Some(ops) => Some(ops),
            None => {
                return empty("an operator entry is undefined at these parameter values".into())
            }
        },
    };
    for &x in &axis_values {
        let (lambda, spectrum, coeffs) = match (&swept, &fixed_operators) {
            (Some((Some(k), ..)), _) => {
                let mut here = params.clone();
                here[*k] = x;
                let (Some(ops), Some(coeffs)) = (real_symmetric(model, &here), coefficients(&here))
                else {
                    return empty(format!("the model is undefined at {axis} = {x}"));
                };
                (1.0, spectrum_of(&ops, 1.0), coeffs)
            }
            (_, Some(ops)) => (x, spectrum_of(ops, x), at_start.clone()),
            _ => unreachable!("either a swept parameter or fixed operators"),
        };
        exact.push(spectrum);
        coefficients_at.push((lambda, coeffs));
    }
    // Each branch starts on the exact eigenvalues nearest its energy just after the first point;
    // branches of one degenerate level take distinct ones (as many as their multiplicity).
    let multiplicities: Vec<usize> = derivation
        .model_spaces
        .iter()
        .flat_map(|space| space.branches.iter().map(|b| b.multiplicity))
        .collect();
    let locations: Vec<(usize, usize)> = derivation
        .model_spaces
        .iter()
        .enumerate()
        .flat_map(|(s, space)| (0..space.branches.len()).map(move |b| (s, b)))
        .collect();
    let mut taken = vec![false; exact.first().map_or(0, Vec::len)];
    let branches = locations
        .into_iter()
        .zip(multiplicities)
        .enumerate()
        .map(|(idx, ((space, branch), multiplicity))| {
            let n_orders = at_start[idx].len();
            let partial_sums: Vec<Vec<f64>> = (0..n_orders)
                .map(|k| {
                    coefficients_at
                        .iter()
                        .map(|(l, coeffs)| {
                            coeffs[idx][..=k].iter().rev().fold(0.0, |acc, c| acc * l + c)
                        })
                        .collect()
                })
                .collect();
            let probe = axis_values.get(1).map_or(0, |_| 1);
            let start = partial_sums.last().map_or(0.0, |v| v[probe]);
            let mut exact_index = None;
            for _ in 0..multiplicity.max(1) {
                let nearest = exact.get(probe).and_then(|eig: &Vec<f64>| {
                    eig.iter()
                        .enumerate()
                        .filter(|(k, _)| !taken[*k])
                        .min_by(|a, b| (a.1 - start).abs().total_cmp(&(b.1 - start).abs()))
                        .map(|(k, _)| k)
                });
                if let Some(k) = nearest {
                    taken[k] = true;
                    exact_index.get_or_insert(k);
                }
            }
            BranchSweep { space, branch, partial_sums, exact_index }
        })
        .collect();
    Sweep { at, axis, axis_values, exact, branches, radius, skipped: None }
}

/// The eigenvalues of `H0 + lambda V1 + lambda^2 V2 + ...`, ascending.
fn spectrum_of(operators: &RealOperators, lambda: f64) -> Vec<f64> {
    let mut h = operators.matrices[0].clone();
    for (k, v) in operators.matrices.iter().enumerate().skip(1) {
        h += v * lambda.powi(k as i32);
    }
    let mut eig = SymmetricEigen::new(h).eigenvalues.as_slice().to_vec();
    eig.sort_by(f64::total_cmp);
    if operators.doubled {
        // The real form of a complex Hermitian matrix has every eigenvalue twice.
        eig = eig.into_iter().step_by(2).collect();
    }
    eig
}

/// `H0, V1, V2, ...` as real symmetric matrices (a complex Hermitian `A + iB` becomes
/// `[[A, -B], [B, A]]`).
struct RealOperators {
    matrices: Vec<DMatrix<f64>>,
    doubled: bool,
}

fn real_symmetric(model: &Model, params: &[f64]) -> Option<RealOperators> {
    let n = model.basis().dimension();
    let terms: Vec<_> = std::iter::once(model.h0()).chain(model.perturbations()).collect();
    let doubled = terms.iter().any(|op| {
        op.triplets().any(|(_, _, v)| evaluate(v, params).is_some_and(|(_, im)| im != 0.0))
    });
    let size = if doubled { 2 * n } else { n };
    let mut matrices = Vec::with_capacity(terms.len());
    for op in terms {
        let mut m = DMatrix::zeros(size, size);
        for (r, c, v) in op.triplets() {
            let (re, im) = evaluate(v, params)?;
            m[(r, c)] = re;
            if doubled {
                m[(r + n, c + n)] = re;
                m[(r + n, c)] = im;
                m[(r, c + n)] = -im;
            }
        }
        matrices.push(m);
    }
    Some(RealOperators { matrices, doubled })
}

/// Root test on the last non-zero coefficient of order 2 or more: `r ~ |E_k|^(-1/k)`.
fn root_test(coeffs: &[f64]) -> Option<f64> {
    let (k, c) = coeffs.iter().enumerate().skip(2).rev().find(|(_, c)| c.abs() > 0.0)?;
    Some(c.abs().powf(-1.0 / k as f64))
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::engine::{self, DeriveOptions};

    #[test]
    fn a_two_level_sweep_follows_both_levels() {
        // H = diag(0, 1) + lambda * sigma_x / 4: levels 1/2 -+ sqrt(1/4 + lambda^2 / 16).
        let text = "space s = spin(1/2)\nH0 = s.z + 1/2\nV = s.x / 2\norder 4\n";
        let (model, _) = crate::load(text).expect("a valid model");
        let derivation = engine::derive(&model, &DeriveOptions::new(4)).expect("derivable");
        let options =
            SweepOptions { lambda_max: Some(0.5), points: Some(11), ..Default::default() };
        let res = sweep(&model, &derivation, &options);
        assert!(res.skipped.is_none());
        assert_eq!(res.axis_values.len(), 11);
        assert_eq!(res.branches.len(), 2);
        let last = res.axis_values.len() - 1;
        let root = (0.25f64 + 0.25 * 0.25 / 4.0).sqrt();
        assert!((res.exact[last][0] - (0.5 - root)).abs() < 1e-12);
        assert!((res.exact[last][1] - (0.5 + root)).abs() < 1e-12);
        for b in &res.branches {
            let series = &b.partial_sums[4][last];
            let exact = res.exact[last][b.exact_index.expect("a start")];
            assert!((series - exact).abs() < 1e-3, "{series} vs {exact}");
        }
    }

    #[test]
    fn a_sweep_against_a_parameter_sets_lambda_to_one() {
        // H = diag(0, 1) + lambda * g * sigma_x / 2, swept over g at lambda = 1.
        let text = "param g\nspace s = spin(1/2)\nH0 = s.z + 1/2\nV = g * s.x\norder 4\n";
        let (model, _) = crate::load(text).expect("a valid model");
        let derivation = engine::derive(&model, &DeriveOptions::new(4)).expect("derivable");
        let options = SweepOptions {
            against: Some(("g".into(), 0.0, 0.4)),
            points: Some(5),
            ..Default::default()
        };
        let res = sweep(&model, &derivation, &options);
        assert!(res.skipped.is_none());
        assert_eq!(res.axis, "g");
        assert_eq!(res.axis_values, vec![0.0, 0.1, 0.2, 0.30000000000000004, 0.4]);
        assert!(res.radius.is_none());
        let root = (0.25f64 + 0.4 * 0.4 / 4.0).sqrt();
        assert!((res.exact[4][0] - (0.5 - root)).abs() < 1e-12);
        let unknown = SweepOptions { against: Some(("h".into(), 0.0, 1.0)), ..Default::default() };
        let skipped = sweep(&model, &derivation, &unknown).skipped.expect("no such parameter");
        assert_eq!(skipped, "the model has no parameter `h` to sweep");
    }
}
