//! Summation of a branch's series by diagonal Padé approximants `[L/L]`, compared with exact
//! diagonalization inside and beyond the radius of convergence (Baker & Graves-Morris, Padé
//! Approximants, 2nd ed. 1996, ch. 1): a Padé approximant built from the same coefficients often
//! follows the eigenvalue well past the point where the truncated series has diverged.

use nalgebra::{DMatrix, DVector};

/// One comparison point of a branch.
#[derive(Clone, Debug, PartialEq)]
pub struct PadeRow {
    /// The value of lambda.
    pub lambda: f64,
    /// `lambda` divided by the radius used to place the points.
    pub relative: f64,
    /// The truncated series at `lambda`.
    pub series: f64,
    /// The `[L/L]` approximant at `lambda` (`None` where its denominator vanishes).
    pub pade: Option<f64>,
    /// The eigenvalue of `H(lambda)` the branch continues into.
    pub exact: f64,
}

/// The diagonal Padé approximant `[L/L]` of the series `coeffs` (`L = (len - 1) / 2`, at most 10),
/// written for the variable `t = lambda / rho` so that the linear system is well scaled:
/// denominator `q` (with `q_0 = 1`) and numerator `p`, coefficients of `t^k`.
pub fn approximant(coeffs: &[f64], rho: f64) -> Option<(Vec<f64>, Vec<f64>)> {
    let c: Vec<f64> = coeffs.iter().enumerate().map(|(k, c)| c * rho.powi(k as i32)).collect();
    // A singular system means a lower-order approximant already reproduces the series.
    let top = ((coeffs.len().saturating_sub(1)) / 2).min(10);
    (1..=top).rev().find_map(|l| approximant_of(&c, l))
}

fn approximant_of(c: &[f64], l: usize) -> Option<(Vec<f64>, Vec<f64>)> {
    // sum_{j=1..L} q_j c_{k-j} = -c_k for k = L+1 .. 2L.
    let a = DMatrix::from_fn(l, l, |row, col| {
        let k = l + 1 + row;
        let j = col + 1;
        c[k - j]
    });
    let rhs = DVector::from_fn(l, |row, _| -c[l + 1 + row]);
    let q_tail = a.lu().solve(&rhs)?;
    let mut q = vec![1.0];
    q.extend(q_tail.iter().copied());
    let p: Vec<f64> =
        (0..=l).map(|k| (0..=k.min(l)).map(|j| q[j] * c[k - j]).sum::<f64>()).collect();
    if p.iter().chain(&q).any(|v| !v.is_finite()) {
        return None;
    }
    Some((p, q))
}

/// The comparison rows at `lambda = f * rho` for `f` in 1/4, 1/2, 3/4, 1, 3/2, 2; `exact(lambda)`
/// gives the eigenvalue the branch continues into (or `None`).
pub fn rows(
    coeffs: &[f64],
    tested: usize,
    rho: f64,
    mut exact: impl FnMut(f64) -> Option<f64>,
) -> Vec<PadeRow> {
    let Some((p, q)) = approximant(coeffs, rho) else { return Vec::new() };
    let horner = |c: &[f64], t: f64| c.iter().rev().fold(0.0, |acc, x| acc * t + x);
    let mut res = Vec::new();
    for f in [0.25, 0.5, 0.75, 1.0, 1.5, 2.0] {
        let lambda = f * rho;
        let Some(value) = exact(lambda) else { continue };
        let denom = horner(&q, f);
        res.push(PadeRow {
            lambda,
            relative: f,
            series: horner(&coeffs[..=tested.min(coeffs.len() - 1)], lambda),
            pade: (denom.abs() > 1e-12).then(|| horner(&p, f) / denom),
            exact: value,
        });
    }
    res
}

#[cfg(test)]
mod tests {
    use super::*;

    /// `1/(1 - x)` is reproduced exactly beyond its radius 1, where the series diverges, and
    /// `[4/4]` of `sqrt(1 + x)` is close to 2 at `x = 3` (Baker & Graves-Morris 1996, §1.1 and
    /// §4.7: Stieltjes-type functions are summed beyond the radius).
    #[test]
    fn series_are_summed_beyond_their_radius() {
        let eval = |(p, q): (Vec<f64>, Vec<f64>), t: f64| {
            p.iter().rev().fold(0.0, |a, x| a * t + x) / q.iter().rev().fold(0.0, |a, x| a * t + x)
        };
        let geometric = approximant(&[1.0; 9], 1.0).expect("regular");
        assert!((eval(geometric, 3.0) + 0.5).abs() < 1e-9);
        let mut binomial = vec![1.0];
        for k in 1..9 {
            let prev: f64 = binomial[k - 1];
            binomial.push(prev * (0.5 - (k as f64 - 1.0)) / k as f64);
        }
        let root = approximant(&binomial, 1.0).expect("regular");
        assert!((eval(root, 3.0) - 2.0).abs() < 1e-3);
    }
}
