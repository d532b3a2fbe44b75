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
    /// Points on the `lambda` axis (at least 2; default 121).
    pub points: Option<usize>,
}

/// Exact levels and series over `0 <= lambda <= lambda_max`.
#[derive(Clone, Debug)]
pub struct Sweep {
    /// The parameter values used, in declaration order.
    pub at: Vec<(String, f64)>,
    /// The sampled `lambda`, ascending from 0.
    pub lambdas: Vec<f64>,
    /// The eigenvalues of `H(lambda)` at each sampled `lambda`, ascending.
    pub exact: Vec<Vec<f64>>,
    /// One entry per branch in the JSON's order.
    pub branches: Vec<BranchSweep>,
    /// The smallest root-test estimate of the radius of convergence over the branches.
    pub radius: Option<f64>,
    /// Set when nothing could be computed, with the reason.
    pub skipped: Option<String>,
}

/// The series of one branch over the sampled `lambda`.
#[derive(Clone, Debug)]
pub struct BranchSweep {
    /// Model space index (0-based).
    pub space: usize,
    /// Branch index inside its model space (0-based).
    pub branch: usize,
    /// `partial_sums[k][j]` is the series to order `k` at `lambdas[j]`, `k = 0..=N`.
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
    let at: Vec<(String, f64)> = names.iter().cloned().zip(params.iter().copied()).collect();
    let mut symbols = params.clone();
    symbols.extend(derivation.roots.iter().map(|r| r.approximation().to_f64()));
    let empty = |why: String| Sweep {
        at: at.clone(),
        lambdas: Vec::new(),
        exact: Vec::new(),
        branches: Vec::new(),
        radius: None,
        skipped: Some(why),
    };
    let order = options.order.unwrap_or(derivation.order).min(derivation.order) as usize;
    let mut branches = Vec::new();
    let mut radius: Option<f64> = None;
    for (s, space) in derivation.model_spaces.iter().enumerate() {
        for (b, branch) in space.branches.iter().enumerate() {
            let coeffs: Option<Vec<f64>> =
                branch.energy.iter().map(|c| evaluate(c, &symbols).map(|(re, _)| re)).collect();
            let Some(mut coeffs) = coeffs else {
                return empty(format!(
                    "branch {}.{} is undefined at these parameter values",
                    s + 1,
                    b + 1
                ));
            };
            coeffs.truncate(order + 1);
            if let Some(r) = root_test(&coeffs) {
                radius = Some(radius.map_or(r, |m: f64| m.min(r)));
            }
            branches.push((s, b, coeffs));
        }
    }
    let n = model.basis().dimension();
    if n > MAX_CHECK_DIMENSION {
        return empty(format!(
            "the product space has {n} states; the diagram diagonalizes at most \
             {MAX_CHECK_DIMENSION}: lower an oscillator cutoff"
        ));
    }
    let Some(operators) = real_symmetric(model, &params) else {
        return empty("an operator entry is undefined at these parameter values".into());
    };
    let lambda_max = options
        .lambda_max
        .filter(|l| l.is_finite() && *l > 0.0)
        .unwrap_or_else(|| radius.map_or(1.0, |r| (1.5 * r).min(1.0)));
    let points = options.points.unwrap_or(121).max(2);
    let lambdas: Vec<f64> =
        (0..points).map(|j| lambda_max * j as f64 / (points - 1) as f64).collect();
    let exact: Vec<Vec<f64>> = lambdas
        .iter()
        .map(|&lambda| {
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
        })
        .collect();
    // Each branch starts on the exact eigenvalues nearest its unperturbed energy; branches of
    // one degenerate level take distinct ones (as many as their multiplicity).
    let multiplicities: Vec<usize> = derivation
        .model_spaces
        .iter()
        .flat_map(|space| space.branches.iter().map(|b| b.multiplicity))
        .collect();
    let mut taken = vec![false; exact.first().map_or(0, Vec::len)];
    let branches = branches
        .into_iter()
        .zip(multiplicities)
        .map(|((space, branch, coeffs), multiplicity)| {
            let partial_sums: Vec<Vec<f64>> = (0..coeffs.len())
                .map(|k| {
                    lambdas
                        .iter()
                        .map(|&l| coeffs[..=k].iter().rev().fold(0.0, |acc, c| acc * l + c))
                        .collect()
                })
                .collect();
            // The branch's energy just after lambda = 0 tells apart the levels it may start on.
            let probe = lambdas.get(1).map_or(0, |_| 1);
            let start = partial_sums.last().map_or(0.0, |v| v[probe]);
            let mut exact_index = None;
            for _ in 0..multiplicity.max(1) {
                let nearest = exact.get(probe).and_then(|eig| {
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
    Sweep { at, lambdas, exact, branches, radius, skipped: None }
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
        assert_eq!(res.lambdas.len(), 11);
        assert_eq!(res.branches.len(), 2);
        let last = res.lambdas.len() - 1;
        let root = (0.25f64 + 0.25 * 0.25 / 4.0).sqrt();
        assert!((res.exact[last][0] - (0.5 - root)).abs() < 1e-12);
        assert!((res.exact[last][1] - (0.5 + root)).abs() < 1e-12);
        for b in &res.branches {
            let series = &b.partial_sums[4][last];
            let exact = res.exact[last][b.exact_index.expect("a start")];
            assert!((series - exact).abs() < 1e-3, "{series} vs {exact}");
        }
    }
}
