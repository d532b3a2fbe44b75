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

/// The monic irreducible factors over the rationals of a square-free rational polynomial, sorted
/// by degree (see [`super::factor::irreducible_factors`]); `None` when the factorization gave up
/// within its budget.
pub fn rational_factors(p: &UniPoly<Rational>) -> Option<Vec<UniPoly<Rational>>> {
    super::factor::irreducible_factors(p)
}

/// The slow reference for [`rational_factors`], kept for tests: for a polynomial whose roots are
/// all real and simple, every monic integer factor (after the substitution `x = y / L` that makes
/// it monic with integer coefficients, by Gauss's lemma) is the product of `x - r` over a subset
/// of the roots, so the roots are isolated and narrowed, the elementary symmetric functions of
/// each subset are bracketed by rational intervals, and a subset whose brackets each hold one
/// integer gives a candidate that exact division confirms or rejects. The number of subsets grows
/// like `2^n`.
#[cfg(test)]
pub(crate) fn real_root_factors(p: &UniPoly<Rational>) -> Option<Vec<UniPoly<Rational>>> {
    let p = p.monic();
    let n = p.degree()?;
    if n <= 1 {
        return Some(vec![p]);
    }
    // q(y) = L^n p(y / L) is monic with integer coefficients.
    let lcm = p.coeffs().iter().fold(num_bigint::BigInt::from(1), |acc, c| c.denom_lcm(&acc));
    let l = Rational::from_bigint(lcm);
    let q = UniPoly::new(
        p.coeffs()
            .iter()
            .enumerate()
            .map(|(k, c)| c.clone() * l.pow((n - k) as i32).expect("L > 0"))
            .collect(),
    );
    let intervals = isolate_real_roots(&q);
    if intervals.len() != n {
        return None;
    }
    let mut bits: u32 = 64;
    'precision: loop {
        let width = Rational::new(1.into(), num_bigint::BigInt::from(1) << bits).expect("non-zero");
        let roots: Vec<(Rational, Rational)> =
            intervals.iter().map(|iv| refine(&q, iv.clone(), &width)).collect();
        let mut remaining: Vec<usize> = (0..n).collect();
        let mut rest = q.clone();
        let mut factors = Vec::new();
        let mut degree = 1;
        while 2 * degree <= remaining.len() {
            match find_factor(&rest, &roots, &remaining, degree) {
                Search::Found(subset, factor) => {
                    remaining.retain(|r| !subset.contains(r));
                    rest = rest.divrem(&factor).expect("non-zero").0;
                    factors.push(factor);
                }
                Search::None => degree += 1,
                Search::Ambiguous => {
                    bits *= 2;
                    if bits > 4096 {
                        return None;
                    }
                    continue 'precision;
                }
            }
        }
        factors.push(rest);
        // Back to x: a factor g(y) of degree d gives L^-d g(L x).
        let res = factors
            .into_iter()
            .map(|g| {
                let d = g.degree().expect("non-zero");
                UniPoly::new(
                    g.coeffs()
                        .iter()
                        .enumerate()
                        .map(|(k, c)| c.clone() * l.pow(k as i32 - d as i32).expect("L > 0"))
                        .collect(),
                )
            })
            .collect();
        return Some(res);
    }
}

#[cfg(test)]
enum Search {
    Found(Vec<usize>, UniPoly<Rational>),
    None,
    Ambiguous,
}

#[cfg(test)]
/// A monic integer factor of `q` of the given degree whose roots are a subset of `remaining`.
fn find_factor(
    q: &UniPoly<Rational>,
    roots: &[(Rational, Rational)],
    remaining: &[usize],
    degree: usize,
) -> Search {
    let mut subset: Vec<usize> = (0..degree).collect();
    loop {
        let chosen: Vec<usize> = subset.iter().map(|&k| remaining[k]).collect();
        // Coefficients of prod (y - r) as intervals, from y^0 up.
        let mut coeffs: Vec<(Rational, Rational)> = vec![(Rational::one(), Rational::one())];
        for &r in &chosen {
            let (lo, hi) = &roots[r];
            let mut next = vec![(Rational::zero(), Rational::zero()); coeffs.len() + 1];
            for (k, (a, b)) in coeffs.iter().enumerate() {
                // (y - r) * c_k y^k: + c_k y^(k+1) and - r c_k y^k.
                next[k + 1].0 += a;
                next[k + 1].1 += b;
                let products = [a.clone() * lo, a.clone() * hi, b.clone() * lo, b.clone() * hi];
                let min = products.iter().min().expect("four").clone();
                let max = products.iter().max().expect("four").clone();
                next[k].0 -= &max;
                next[k].1 -= &min;
            }
            coeffs = next;
        }
        let mut candidate = Vec::with_capacity(coeffs.len());
        let mut ambiguous = false;
        let mut possible = true;
        for (lo, hi) in &coeffs {
            let first = ceil(lo);
            let last = floor(hi);
            if first > last {
                possible = false;
                break;
            }
            if first != last {
                ambiguous = true;
                break;
            }
            candidate.push(Rational::from_bigint(first));
        }
        if ambiguous {
            return Search::Ambiguous;
        }
        if possible {
            let g = UniPoly::new(candidate);
            if q.divrem(&g).is_some_and(|(_, r)| r.is_zero()) {
                return Search::Found(chosen, g);
            }
        }
        if !next_subset(&mut subset, remaining.len()) {
            return Search::None;
        }
    }
}

#[cfg(test)]
/// The next `k`-subset of `0..n` in lexicographic order; false after the last.
fn next_subset(subset: &mut [usize], n: usize) -> bool {
    let k = subset.len();
    for i in (0..k).rev() {
        if subset[i] < n - k + i {
            subset[i] += 1;
            for j in i + 1..k {
                subset[j] = subset[j - 1] + 1;
            }
            return true;
        }
    }
    false
}

#[cfg(test)]
fn floor(x: &Rational) -> num_bigint::BigInt {
    num_integer::Integer::div_floor(x.numer(), x.denom())
}

#[cfg(test)]
fn ceil(x: &Rational) -> num_bigint::BigInt {
    -num_integer::Integer::div_floor(&-x.numer(), x.denom())
}

#[cfg(test)]
mod tests {
    use super::*;

    fn q(n: i64) -> Rational {
        Rational::from_i64(n)
    }

    #[test]
    fn a_sextic_from_a_six_site_chain_has_two_cubic_factors() {
        // The path graph on six sites has eigenvalues 2 cos(k pi / 7), k = 1..6; its characteristic
        // polynomial x^6 - 5x^4 + 6x^2 - 1 is (x^3 + x^2 - 2x - 1)(x^3 - x^2 - 2x + 1)
        // (a standard result on Chebyshev polynomials of the second kind, U_6(x/2)).
        let p = UniPoly::new(vec![q(-1), q(0), q(6), q(0), q(-5), q(0), q(1)]);
        let mut factors: Vec<Vec<Rational>> =
            rational_factors(&p).expect("real roots").iter().map(|f| f.coeffs().to_vec()).collect();
        factors.sort();
        assert_eq!(factors, vec![vec![q(-1), q(-2), q(1), q(1)], vec![q(1), q(-2), q(-1), q(1)]]);
    }

    #[test]
    fn factors_with_rational_coefficients_are_found() {
        // (x^2 - 2)(x^2 - 3/4) has no rational roots but two rational quadratic factors.
        let p = UniPoly::new(vec![
            Rational::ratio(3, 2).unwrap(),
            q(0),
            Rational::ratio(-11, 4).unwrap(),
            q(0),
            q(1),
        ]);
        let factors = rational_factors(&p).expect("real roots");
        assert_eq!(factors.len(), 2);
        assert!(factors.iter().all(|f| f.degree() == Some(2)));
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

    /// Factors sorted by degree, then coefficients.
    fn sorted(mut factors: Vec<UniPoly<Rational>>) -> Vec<UniPoly<Rational>> {
        factors
            .sort_by(|a, b| a.degree().cmp(&b.degree()).then_with(|| a.coeffs().cmp(b.coeffs())));
        factors
    }

    proptest::proptest! {
        #![proptest_config(proptest::prelude::ProptestConfig { cases: 64, ..Default::default() })]

        /// The modular factorization agrees with the slow real-root search on products of
        /// random real-rooted quadratics `x^2 + k x - m` (`m > 0`), linear factors, and sometimes
        /// the irreducible cubic `x^3 - 3x + 1` with three real roots.
        #[test]
        fn modular_factors_agree_with_the_real_root_search(
            quadratics in proptest::collection::vec((-4i64..5, 1i64..7), 0..3),
            linears in proptest::collection::vec(-5i64..6, 0..3),
            cubic in proptest::bool::ANY,
        ) {
            let mut cp = UniPoly::new(vec![q(1)]);
            for (k, m) in &quadratics {
                cp = cp * UniPoly::new(vec![q(-m), q(*k), q(1)]);
            }
            for a in &linears {
                cp = cp * UniPoly::new(vec![q(-a), q(1)]);
            }
            if cubic {
                cp = cp * UniPoly::new(vec![q(1), q(-3), q(0), q(1)]);
            }
            let p = cp.square_free_part();
            proptest::prop_assume!(p.degree() >= Some(1));
            let slow = real_root_factors(&p).expect("real simple roots");
            let fast = rational_factors(&p).expect("within budget");
            proptest::prop_assert_eq!(sorted(fast), sorted(slow));
        }
    }
}

/// The real root of a rational polynomial named by `root_between(P, lo, hi)`, as far as it can be
/// written exactly.
#[derive(Clone, Debug, PartialEq, Eq)]
pub enum RootBetween {
    /// The root, rational or a quadratic irrationality.
    Exact(super::Radical),
    /// Its minimal polynomial has this degree (3 or more): no square roots write it.
    Degree(usize),
    /// `P` has this many real roots strictly between the bounds, not one.
    Count(usize),
}

/// The number of real roots of the square-free `q` strictly between `lo` and `hi`.
fn count_between(
    seq: &[UniPoly<Rational>],
    q: &UniPoly<Rational>,
    lo: &Rational,
    hi: &Rational,
) -> usize {
    if lo >= hi {
        return 0;
    }
    // Sturm counts the roots in (lo, hi]; a root at hi itself is not strictly inside.
    let count = sign_changes(seq, lo).saturating_sub(sign_changes(seq, hi));
    count - usize::from(q.eval(hi).is_zero() && count > 0)
}

/// The only real root of `p` strictly between `lo` and `hi`: exact when it is rational or a root of
/// a quadratic factor of `p` (the quadratic formula), otherwise the degree of its factor.
pub fn root_between(p: &UniPoly<Rational>, lo: &Rational, hi: &Rational) -> RootBetween {
    let q = p.square_free_part();
    if q.degree().unwrap_or(0) == 0 {
        return RootBetween::Count(0);
    }
    let seq = sturm_sequence(&q);
    let count = count_between(&seq, &q, lo, hi);
    if count != 1 {
        return RootBetween::Count(count);
    }
    for (r, _) in q.rational_roots() {
        if &r > lo && &r < hi {
            return RootBetween::Exact(super::Radical::from(r));
        }
    }
    // The irreducible factor holding the root: rational factors where every root is real, else
    // the polynomial with its rational roots divided out.
    let factor = match rational_factors(&q) {
        Some(factors) => factors.into_iter().find(|f| {
            let s = sturm_sequence(f);
            f.degree().unwrap_or(0) > 0 && count_between(&s, f, lo, hi) == 1
        }),
        None => {
            let mut rest = q.clone();
            for (r, _) in q.rational_roots() {
                rest = rest.deflate(&r).unwrap_or(rest);
            }
            Some(rest)
        }
    };
    let Some(factor) = factor.map(|f| f.monic()) else { return RootBetween::Degree(0) };
    let degree = factor.degree().unwrap_or(0);
    if degree != 2 {
        return RootBetween::Degree(degree);
    }
    // x^2 + b x + c: (-b +- sqrt(b^2 - 4c)) / 2, the sign chosen by the side of the vertex -b/2.
    let (c, b) = (factor.coeffs()[0].clone(), factor.coeffs()[1].clone());
    let half = Rational::ratio(1, 2).expect("2 != 0");
    let vertex = -(b.clone() * &half);
    let disc = b.clone() * &b - Rational::from_i64(4) * &c;
    let s = sturm_sequence(&factor);
    let below = count_between(&s, &factor, lo, &vertex) == 1;
    let root = super::Radical::sqrt_of(&disc).scale(&half);
    let root = if below { -root } else { root };
    RootBetween::Exact(super::Radical::from(vertex) + root)
}

/// Bounds `(lo, hi)` around the `k`-th real root of `p` (1-based, ascending) with no other root
/// between them, for the deprecated spelling `root(P, k)`.
pub fn kth_root_bounds(p: &UniPoly<Rational>, k: usize) -> Option<(Rational, Rational)> {
    let isolated = isolate_real_roots(p);
    let (lo, hi) = isolated.get(k.checked_sub(1)?)?.clone();
    // (lo, hi] holds the root; hi may be the root itself only when it is rational.
    let q = p.square_free_part();
    if q.eval(&hi).is_zero() {
        let width = (hi.clone() - &lo) * Rational::ratio(1, 2).expect("2 != 0");
        return Some((lo, hi + width));
    }
    Some((lo, hi))
}

#[cfg(test)]
mod root_between_tests {
    use super::*;

    fn poly(coeffs: &[i64]) -> UniPoly<Rational> {
        UniPoly::new(coeffs.iter().map(|c| Rational::from_i64(*c)).collect())
    }

    /// `x^2 - 2` between 1 and 2 is `sqrt(2)`, between -2 and -1 it is `-sqrt(2)`; `x^3 - x^2 -
    /// 2x + 1` (roots 2 cos(k pi / 7)) has degree 3 and one root between 0 and 1.
    #[test]
    fn quadratic_and_cubic() {
        let two = Rational::from_i64(2);
        let sqrt2 = super::super::Radical::sqrt_of(&two);
        let (one, m1, m2) = (Rational::from_i64(1), Rational::from_i64(-1), Rational::from_i64(-2));
        assert_eq!(root_between(&poly(&[-2, 0, 1]), &one, &two), RootBetween::Exact(sqrt2.clone()));
        assert_eq!(root_between(&poly(&[-2, 0, 1]), &m2, &m1), RootBetween::Exact(-sqrt2));
        let cubic = poly(&[1, -2, -1, 1]);
        assert_eq!(root_between(&cubic, &Rational::from_i64(0), &one), RootBetween::Degree(3));
        assert_eq!(root_between(&cubic, &m2, &two), RootBetween::Count(3));
        assert_eq!(
            root_between(&poly(&[-3, 1]), &one, &Rational::from_i64(4)),
            RootBetween::Exact(super::super::Radical::from(Rational::from_i64(3)))
        );
    }
}
