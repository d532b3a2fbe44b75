//! Rayleigh–Schrödinger recursion for one state over the rationals, fraction-free.
//!
//! For a one-state model space `P = |p><p|` the wave-operator recursion of `bloch` reduces to
//! `E_m = <p| sum_k V_k Omega_{m-k} |p>` and
//! `Omega_m = R (sum_k V_k Omega_{m-k} - sum_{j=1..m-1} E_{m-j} Omega_j)` with `R` the reduced
//! resolvent. Every vector is kept as integer numerators over one common denominator, so the
//! inner loops are big-integer multiply–adds with no gcd; each vector is reduced once, by its
//! content (ENGINE.md §8). [`rationalize`] finds the diagonal rescaling that makes a numeric
//! problem rational in the first place.

use std::collections::BTreeSet;

use num_bigint::BigInt;
use num_integer::Integer;
use num_traits::{One, Signed, Zero};

use super::bloch::{Bloch, Problem};
use crate::exact::{Field, Radical, Rational};
use crate::linalg::{DenseMatrix, SparseMatrix, SparseVec};

/// A sparse vector `num / den` with integer entries.
struct IntVec {
    entries: Vec<(usize, BigInt)>,
    den: BigInt,
}

/// A matrix with integer entries over one denominator, stored by columns.
struct IntColumns {
    columns: Vec<Vec<(usize, BigInt)>>,
    den: BigInt,
}

fn integer_columns(term: &crate::linalg::SparseMatrix<Rational>) -> IntColumns {
    let den = term.triplets().fold(BigInt::one(), |acc, (_, _, v)| acc.lcm(v.denom()));
    let mut columns = vec![Vec::new(); term.n_cols()];
    for (r, c, v) in term.triplets() {
        columns[c].push((r, v.numer() * (&den / v.denom())));
    }
    IntColumns { columns, den }
}

/// The one-state wave operator of `problem` for state `p` to `order`, as `bloch::wave_operator`
/// would return it but with `Omega_m` only for `m <= keep` (turning every vector into reduced
/// rationals costs a gcd per entry), and the indices every `Omega_m` reaches.
pub(crate) fn rayleigh_schrodinger(
    problem: &Problem<Rational>,
    p: usize,
    order: usize,
    keep: usize,
) -> (Bloch<Rational>, Vec<BTreeSet<usize>>) {
    let n = problem.energies.len();
    let terms: Vec<IntColumns> = problem.terms.iter().map(integer_columns).collect();
    // Gaps E_p - E_i as reduced fractions a_i / b_i (None inside the level of p).
    let gaps: Vec<Option<(BigInt, BigInt)>> = problem
        .energies
        .iter()
        .enumerate()
        .map(|(i, e)| {
            let g = problem.energies[p].clone() - e;
            (i != p && !g.is_zero()).then(|| (g.numer().clone(), g.denom().clone()))
        })
        .collect();
    let mut omega: Vec<IntVec> =
        vec![IntVec { entries: vec![(p, BigInt::one())], den: BigInt::one() }];
    let mut energies: Vec<Rational> = vec![problem.energies[p].clone()];
    let mut acc: Vec<BigInt> = vec![BigInt::zero(); n];
    let mut touched: Vec<bool> = vec![false; n];
    let mut support: Vec<usize> = Vec::new();
    for m in 1..=order {
        // Denominators of every term, and their least common multiple L.
        let v_terms: Vec<(usize, &IntColumns)> =
            terms.iter().enumerate().take(m).map(|(k, t)| (m - k - 1, t)).collect();
        let mut lcm = BigInt::one();
        // Denominators mostly divide the running lcm already; a remainder is cheaper than the
        // binary gcd that lcm runs on numbers of this size.
        let mut include = |d: BigInt| {
            if !(&lcm % &d).is_zero() {
                lcm = lcm.lcm(&d);
            }
        };
        for (prev, t) in &v_terms {
            include(&t.den * &omega[*prev].den);
        }
        for j in 1..m {
            let e = &energies[m - j];
            if !e.is_zero() {
                include(e.denom() * &omega[j].den);
            }
        }
        let mut add = |i: usize, value: BigInt, acc: &mut Vec<BigInt>| {
            if !touched[i] {
                touched[i] = true;
                support.push(i);
            }
            acc[i] += value;
        };
        for (prev, t) in &v_terms {
            let vec = &omega[*prev];
            let factor = &lcm / (&t.den * &vec.den);
            for (c, x) in &vec.entries {
                let fx = &factor * x;
                for (r, v) in &t.columns[*c] {
                    add(*r, &fx * v, &mut acc);
                }
            }
        }
        for j in 1..m {
            let e = &energies[m - j];
            if e.is_zero() {
                continue;
            }
            let vec = &omega[j];
            let factor = -(&lcm / (e.denom() * &vec.den)) * e.numer();
            for (i, x) in &vec.entries {
                add(*i, &factor * x, &mut acc);
            }
        }
        support.sort_unstable();
        // E_m from the component along p; the rest, divided by the gaps, is Omega_m.
        let e_m = Rational::new(std::mem::take(&mut acc[p]), lcm.clone()).expect("lcm > 0");
        let mut gap_lcm = BigInt::one();
        for &i in &support {
            if let Some((a, _)) = &gaps[i] {
                if !acc[i].is_zero() {
                    gap_lcm = gap_lcm.lcm(a);
                }
            }
        }
        let mut entries = Vec::with_capacity(support.len());
        for &i in &support {
            touched[i] = false;
            let x = std::mem::take(&mut acc[i]);
            if x.is_zero() {
                continue;
            }
            let Some((a, b)) = &gaps[i] else { continue };
            let y = x * b * (&gap_lcm / a);
            entries.push((i, y));
        }
        support.clear();
        let mut den = lcm * gap_lcm;
        // The common factor of numerators and denominator, found from the denominator down so
        // that it stops as soon as it reaches 1.
        let mut g = den.clone();
        for (_, y) in &entries {
            if g.is_one() {
                break;
            }
            g = g.gcd(y);
        }
        if !g.is_one() && !g.is_zero() {
            for (_, y) in &mut entries {
                *y /= &g;
            }
            den /= &g;
        }
        if den.is_negative() {
            den = -den;
            for (_, y) in &mut entries {
                *y = -std::mem::take(y);
            }
        }
        omega.push(IntVec { entries, den });
        energies.push(e_m);
    }
    let reach: Vec<BTreeSet<usize>> =
        omega.iter().map(|v| v.entries.iter().map(|(i, _)| *i).collect()).collect();
    let omega = omega
        .into_iter()
        .take(keep + 1)
        .map(|v| {
            let den = v.den;
            vec![SparseVec::from_pairs(
                v.entries
                    .into_iter()
                    .map(|(i, x)| (i, Rational::new(x, den.clone()).expect("den > 0")))
                    .collect(),
            )]
        })
        .collect();
    let bloch: Vec<DenseMatrix<Rational>> =
        energies.into_iter().map(|e| DenseMatrix::from_rows(vec![vec![e]])).collect();
    let s_inv_half = (0..=order)
        .map(|m| if m == 0 { DenseMatrix::identity(1) } else { DenseMatrix::zeros(1, 1) })
        .collect();
    (Bloch { model: vec![p], omega, hermitian: bloch.clone(), bloch, s_inv_half }, reach)
}

/// The diagonal rescaling found by [`rationalize`]: `d_i = sqrt(r_i)` with `r_i` a product of
/// powers of small primes, kept as exponents so that no big rational is ever formed.
pub(crate) struct Rescaling {
    primes: Vec<u64>,
    /// `exponents[i][k]` is the power of `primes[k]` in `r_i`.
    exponents: Vec<Vec<i32>>,
}

impl Rescaling {
    /// `r_i / r_p`, the square of the factor that maps coordinate `i` back when state `p` keeps
    /// its scale.
    pub(crate) fn square_ratio(&self, i: usize, p: usize) -> Rational {
        let mut acc = Rational::one();
        for (k, prime) in self.primes.iter().enumerate() {
            let e = self.exponents[i][k] - self.exponents[p][k];
            if e != 0 {
                acc *= &Rational::from_bigint(BigInt::from(*prime)).pow(e).expect("prime > 0");
            }
        }
        acc
    }
}

/// A coupling `(row, column, primes of its radicand, rational coefficient)`.
type Coupling = (usize, usize, Vec<usize>, Rational);

/// The primes below this bound factor every radicand `rationalize` accepts; spin and oscillator
/// matrix elements only involve primes up to about the dimension of a factor.
const PRIME_BOUND: u64 = 1 << 14;

/// A diagonal similarity `A'_k = D^{-1} A_k D` that makes every coupling rational, found by
/// walking the coupling graph from each component's first state (ENGINE.md §8: it leaves every
/// branch unchanged). `D = diag(sqrt(r_i))`; a coupling `c*sqrt(s)` from `i` to `j` becomes
/// `c*sqrt(s r_j / r_i)`, which must be rational. The `r_i` are kept as prime exponents, so a
/// coupling costs a few small-integer operations however large `r_i` grows (for the oscillator
/// `r_n` is `1/n!`). `None` when a coupling is not a single real radical, a radicand has a prime
/// factor beyond the bound, or a cycle disagrees.
pub(crate) fn rationalize(problem: &Problem<Radical>) -> Option<(Problem<Rational>, Rescaling)> {
    let n = problem.energies.len();
    let single = |v: &Radical| -> Option<(i64, Rational)> {
        match v.terms() {
            [(s, c)] if !s.is_negative() => Some((s.to_i64()?, c.clone())),
            _ => None,
        }
    };
    // Factor every radicand over the primes below the bound.
    let primes: Vec<u64> = (2..PRIME_BOUND)
        .filter(|&k| (2..k).take_while(|d| d * d <= k).all(|d| k % d != 0))
        .collect();
    let mut factored: std::collections::BTreeMap<i64, Vec<usize>> =
        std::collections::BTreeMap::new();
    let mut factor = |s: i64| -> Option<Vec<usize>> {
        if let Some(f) = factored.get(&s) {
            return Some(f.clone());
        }
        let mut rest = u64::try_from(s).ok()?;
        let mut res = Vec::new();
        for (k, prime) in primes.iter().enumerate() {
            if rest == 1 {
                break;
            }
            if rest % prime == 0 {
                // Square-free: each prime divides once.
                rest /= prime;
                res.push(k);
            }
        }
        if rest != 1 {
            return None;
        }
        factored.insert(s, res.clone());
        Some(res)
    };
    let mut neighbors: Vec<Vec<(usize, Vec<usize>)>> = vec![Vec::new(); n];
    let mut entries: Vec<Vec<Coupling>> = Vec::new();
    for term in &problem.terms {
        let mut list = Vec::new();
        for (i, j, v) in term.triplets() {
            let (s, c) = single(v)?;
            let primes_of_s = factor(s)?;
            if i != j {
                neighbors[i].push((j, primes_of_s.clone()));
            }
            list.push((i, j, primes_of_s, c));
        }
        entries.push(list);
    }
    // Exponent vectors run over the primes that occur, not over every prime below the bound.
    let mut occurring: Vec<usize> =
        entries.iter().flatten().flat_map(|(_, _, f, _)| f.clone()).collect();
    occurring.sort_unstable();
    occurring.dedup();
    let slot = |k: usize| occurring.binary_search(&k).expect("an occurring prime");
    for list in &mut entries {
        for (_, _, f, _) in list.iter_mut() {
            *f = f.iter().map(|&k| slot(k)).collect();
        }
    }
    for list in &mut neighbors {
        for (_, f) in list.iter_mut() {
            *f = f.iter().map(|&k| slot(k)).collect();
        }
    }
    let primes: Vec<u64> = occurring.iter().map(|&k| primes[k]).collect();
    let n_primes = primes.len();
    let mut exponents: Vec<Option<Vec<i32>>> = vec![None; n];
    for root in 0..n {
        if exponents[root].is_some() {
            continue;
        }
        exponents[root] = Some(vec![0; n_primes]);
        let mut stack = vec![root];
        while let Some(i) = stack.pop() {
            for (j, primes_of_s) in &neighbors[i] {
                if exponents[*j].is_none() {
                    // d_j = d_i / sqrt(s) makes this coupling rational.
                    let mut e = exponents[i].clone().expect("visited");
                    for &k in primes_of_s {
                        e[k] -= 1;
                    }
                    exponents[*j] = Some(e);
                    stack.push(*j);
                }
            }
        }
    }
    let exponents: Vec<Vec<i32>> = exponents.into_iter().collect::<Option<_>>()?;
    let mut terms = Vec::new();
    for list in entries {
        let mut triplets = Vec::with_capacity(list.len());
        for (i, j, primes_of_s, c) in list {
            // sqrt(s r_j / r_i) = prod p^(e_p / 2), every e_p even.
            let mut e: Vec<(usize, i32)> = Vec::new();
            let (ei, ej) = (&exponents[i], &exponents[j]);
            for k in 0..n_primes {
                let mut x = ej[k] - ei[k];
                if primes_of_s.contains(&k) {
                    x += 1;
                }
                if x != 0 {
                    e.push((k, x));
                }
            }
            let mut value = c;
            for (k, x) in e {
                if x % 2 != 0 {
                    return None;
                }
                value *=
                    &Rational::from_bigint(BigInt::from(primes[k])).pow(x / 2).expect("prime > 0");
            }
            triplets.push((i, j, value));
        }
        terms.push(SparseMatrix::from_triplets(n, n, triplets));
    }
    let energies = problem.energies.iter().map(Radical::as_rational).collect::<Option<_>>()?;
    // The metric only enters the Hermitian form, which one-state model spaces skip.
    let metric = (0..n).map(|_| Rational::one()).collect();
    Some((Problem { energies, metric, terms }, Rescaling { primes, exponents }))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn agrees_with_the_general_recursion() {
        let problem = super::super::bloch::tests::quartic_pub(40);
        let (fast, _) = rayleigh_schrodinger(&problem, 0, 8, 8);
        let general = super::super::bloch::wave_operator(&problem, &[0], 8);
        assert_eq!(fast.bloch, general.bloch);
        assert_eq!(fast.omega, general.omega);
    }
}
