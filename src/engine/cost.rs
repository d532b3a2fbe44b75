//! An estimate of what a derivation will cost, made before it starts, so that a model that would
//! run for hours or exhaust memory is refused at once with advice on what to change.
//! Start from [`estimate`]; the unit is arbitrary and calibrated on this project's own examples.

use crate::model::Model;

/// The most work units the series of a derivation may need (seconds on a small machine).
pub const MAX_WORK: u128 = 1_200_000_000;

/// The most work, in products of big integers, for the characteristic polynomials of the
/// secular matrices: `d^4 / 4` for a model space of `d` states.
pub const MAX_SECULAR_WORK: u128 = 400_000_000;

/// The most terms that a coefficient of the series may be expected to reach: the number of
/// monomials of degree at most N in the parameters that occur.
pub const MAX_TERMS_PER_COEFFICIENT: u128 = 20_000;

/// What [`estimate`] found.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Cost {
    /// The estimated work, in units of [`MAX_WORK`].
    pub work: u128,
    /// The terms a coefficient of order N may have, `C(N + P, P)` for `P` parameters in use.
    pub terms_per_coefficient: u128,
    /// The parameters that occur in H0 or a perturbation.
    pub n_params: u32,
    /// The largest model space (states).
    pub largest_space: usize,
    /// The work of the secular characteristic polynomials, in units of [`MAX_SECULAR_WORK`].
    pub secular_work: u128,
}

impl Cost {
    /// Whether the derivation is within [`MAX_WORK`] and [`MAX_TERMS_PER_COEFFICIENT`].
    pub fn is_allowed(&self) -> bool {
        self.work <= MAX_WORK
            && self.secular_work <= MAX_SECULAR_WORK
            && self.terms_per_coefficient <= MAX_TERMS_PER_COEFFICIENT
    }
}

/// The estimated cost of deriving `model` to `order` with model spaces of `space_dims` states
/// in a space of `n_states` states.
///
/// Per model space of `d` states the wave operator touches `n d` entries for each pair of
/// orders (`n d N^2`); the effective Hamiltonian, its metric and the secular splitting multiply
/// `d x d` matrices (`d^3 N^2`). Each unit is multiplied by the expected size of an entry: for a
/// symbolic model its number of terms, `C(N + P, P)` (one more symbol in a model space of several
/// states, whose secular roots may need one); for a numeric one a weight for its big integers;
/// both grow with the order. Apart from that a secular matrix is split through its
/// characteristic polynomial over big integers, `d^4 / 4` products.
///
/// The estimate does not see how many distinct energy denominators a symbolic H0 brings into
/// the coefficients (a dense V over many symbolic levels can cost far more than it predicts);
/// `--max-seconds` and `--max-memory` of the command line stop such a run cleanly.
pub fn estimate(model: &Model, n_states: usize, space_dims: &[usize], order: u32) -> Cost {
    let n_params = params_in_use(model);
    let order_u = u128::from(order);
    let terms_per_coefficient = binomial_saturating(order_u + u128::from(n_params), n_params);
    let growth = 1 + order_u / 8;
    let n = n_states as u128;
    let mut work: u128 = 0;
    let mut secular_work: u128 = 0;
    for &d in space_dims {
        let per_entry = if n_params == 0 {
            10 * growth
        } else {
            let symbols = n_params + u32::from(d > 1);
            binomial_saturating(order_u + u128::from(symbols), symbols)
                .min(MAX_TERMS_PER_COEFFICIENT + 1)
                .saturating_mul(growth)
        };
        let d = d as u128;
        let sparse = n * d * order_u * order_u;
        let dense = d * d * d * order_u * order_u;
        work = work.saturating_add((sparse + dense).saturating_mul(per_entry));
        secular_work = secular_work.saturating_add(d * d * d * d / 4);
    }
    Cost {
        work,
        terms_per_coefficient,
        n_params,
        largest_space: space_dims.iter().copied().max().unwrap_or(0),
        secular_work,
    }
}

/// The number of parameters that occur in H0 or a perturbation.
fn params_in_use(model: &Model) -> u32 {
    let mut seen = std::collections::BTreeSet::new();
    for term in std::iter::once(model.h0()).chain(model.perturbations()) {
        for (_, _, x) in term.triplets() {
            seen.extend(x.numer().params());
            seen.extend(x.denom().params());
        }
    }
    seen.len() as u32
}

/// `C(n, k)`, saturating.
fn binomial_saturating(n: u128, k: u32) -> u128 {
    let k = u128::from(k).min(n);
    let mut res: u128 = 1;
    for i in 0..k {
        res = match res.checked_mul(n - i) {
            Some(x) => x / (i + 1),
            None => return u128::MAX,
        };
    }
    res
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn binomials() {
        assert_eq!(binomial_saturating(104, 100), 4_598_126);
        assert_eq!(binomial_saturating(5, 0), 1);
        assert_eq!(binomial_saturating(3, 3), 1);
    }
}
