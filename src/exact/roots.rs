//! Real roots of rational polynomials, isolated exactly by Sturm sequences.
//! Start from [`isolate_real_roots`]; intervals have rational ends, so no floating point enters.

use super::univariate::UniPoly;
use super::{Field, Rational};

/// The Sturm sequence `p, p', -rem(p, p'), ...` of a square-free polynomial
/// (Sturm 1835; e.g. Basu, Pollack & Roy, Algorithms in Real Algebraic Geometry, 2006, §2.2).
fn sturm_sequence(p: &UniPoly<Rational>) -> Vec<UniPoly<Rational>> {
    let mut seq = vec![p.clone(), p.derivative()];
    loop {
        let n = seq.len();
        if seq[n - 1].is_zero() {
            seq.pop();
            break;
        }
        let (_, rem) = seq[n - 2].divrem(&seq[n - 1]).expect("non-zero divisor");
        if rem.is_zero() {
            break;
        }
        seq.push(-rem);
    }
    seq
}

fn sign_changes(seq: &[UniPoly<Rational>], x: &Rational) -> usize {
    let signs: Vec<i32> = seq.iter().map(|q| q.eval(x).signum()).filter(|s| *s != 0).collect();
    signs.windows(2).filter(|w| w[0] != w[1]).count()
}

/// Disjoint intervals `(lo, hi]`, one around each distinct real root of `p` (not the zero
/// polynomial), in ascending order.
pub fn isolate_real_roots(p: &UniPoly<Rational>) -> Vec<(Rational, Rational)> {
    let p = p.square_free_part();
    if p.degree().unwrap_or(0) == 0 {
        return Vec::new();
    }
    let seq = sturm_sequence(&p);
    // Cauchy's bound: every root lies in (-b, b] with b = 1 + max |a_i / a_n|.
    let lead = p.leading_coeff().expect("non-zero").clone();
    let inv_lead = lead.inv().expect("non-zero");
    let bound = p
        .coeffs()
        .iter()
        .map(|c| (c.clone() * &inv_lead).abs())
        .fold(Rational::zero(), |a, b| if b > a { b } else { a })
        + Rational::one();
    let mut res = Vec::new();
    let mut stack = vec![(-bound.clone(), bound)];
    while let Some((lo, hi)) = stack.pop() {
        let count = sign_changes(&seq, &lo) - sign_changes(&seq, &hi);
        match count {
            0 => {}
            1 => res.push((lo, hi)),
            _ => {
                let mid = (lo.clone() + &hi) * Rational::ratio(1, 2).expect("2 != 0");
                stack.push((lo, mid.clone()));
                stack.push((mid, hi));
            }
        }
    }
    res.sort();
    res
}

/// Halves an isolating interval `(lo, hi]` of a root of `p` until it is narrower than `width`.
pub fn refine(
    p: &UniPoly<Rational>,
    interval: (Rational, Rational),
    width: &Rational,
) -> (Rational, Rational) {
    let (mut lo, mut hi) = interval;
    let half = Rational::ratio(1, 2).expect("2 != 0");
    while hi.clone() - &lo > *width {
        let mid = (lo.clone() + &hi) * &half;
        let at_mid = p.eval(&mid);
        if at_mid.is_zero() {
            return (mid.clone(), mid);
        }
        // The root is in (lo, mid] exactly when p changes sign there.
        if at_mid.signum() == p.eval(&hi).signum() && !p.eval(&hi).is_zero() {
            hi = mid;
        } else {
            lo = mid;
        }
    }
    (lo, hi)
}

#[cfg(test)]
mod tests {
    use super::*;

    fn q(n: i64) -> Rational {
        Rational::from_i64(n)
    }

    #[test]
    fn three_real_roots_of_a_cubic_in_order() {
        // x^3 - 3x + 1 has roots 2cos(2 pi k / 9)-type values: about -1.879, 0.347, 1.532.
        let p = UniPoly::new(vec![q(1), q(-3), q(0), q(1)]);
        let roots = isolate_real_roots(&p);
        assert_eq!(roots.len(), 3);
        let eps = Rational::ratio(1, 1 << 20).unwrap();
        let mids: Vec<f64> = roots
            .into_iter()
            .map(|iv| {
                let (lo, hi) = refine(&p, iv, &eps);
                (lo.to_f64() + hi.to_f64()) / 2.0
            })
            .collect();
        let expected = [-1.8793852415718, 0.3472963553339, 1.5320888862380];
        for (m, e) in mids.iter().zip(expected) {
            assert!((m - e).abs() < 1e-5, "{m} vs {e}");
        }
    }
}
