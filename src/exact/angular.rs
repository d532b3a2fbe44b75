//! Exact angular-momentum coupling coefficients: Wigner 3j symbols and Clebsch–Gordan
//! coefficients as elements of the radical field (a rational times the square root of a rational).
//! Arguments are given doubled (`2j`, `2m`) so that half-integers are plain integers.
//! Knows nothing of spaces or operators.
#![deny(clippy::float_arithmetic)]

use num_bigint::BigInt;
use num_traits::One;

use super::{Field, Radical, Rational};

/// Why a coupling coefficient could not be formed from its arguments.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum CouplingError {
    /// An angular momentum is negative.
    NegativeJ,
    /// A projection is not one of `j, j-1, ..., -j` for its `j`.
    BadProjection,
    /// The arguments are too large to evaluate (factorials beyond a few thousand).
    TooLarge,
}

impl std::fmt::Display for CouplingError {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        match self {
            CouplingError::NegativeJ => write!(f, "an angular momentum j must not be negative"),
            CouplingError::BadProjection => {
                write!(f, "each m must be one of j, j-1, ..., -j for its j")
            }
            CouplingError::TooLarge => write!(f, "angular momenta too large (at most 1000)"),
        }
    }
}

/// The largest doubled angular momentum accepted (`j <= 1000`); factorials stay small.
const MAX_TWICE_J: i64 = 2000;

/// `n!` for a small non-negative `n`.
fn factorial(n: i64) -> BigInt {
    (2..=n).fold(BigInt::one(), |acc, k| acc * BigInt::from(k))
}

fn check_pair(twice_j: i64, twice_m: i64) -> Result<(), CouplingError> {
    if twice_j < 0 {
        return Err(CouplingError::NegativeJ);
    }
    if twice_j > MAX_TWICE_J {
        return Err(CouplingError::TooLarge);
    }
    if twice_m.abs() > twice_j || (twice_j - twice_m) % 2 != 0 {
        return Err(CouplingError::BadProjection);
    }
    Ok(())
}

/// The Wigner 3j symbol `(j1 j2 j3; m1 m2 m3)`, arguments doubled.
///
/// Racah's closed form (Racah, Phys. Rev. 62, 438 (1942); Edmonds, Angular Momentum in Quantum
/// Mechanics (1957), eq. 3.7.3):
/// `(-1)^(j1-j2-m3) sqrt(Δ(j1 j2 j3) Π (j_i+m_i)!(j_i-m_i)!) Σ_k (-1)^k / [k! (j3-j2+k+m1)!
/// (j3-j1+k-m2)! (j1+j2-j3-k)! (j1-k-m1)! (j2-k+m2)!]` with
/// `Δ = (j1+j2-j3)!(j1-j2+j3)!(-j1+j2+j3)!/(j1+j2+j3+1)!`.
/// It is zero unless `m1 + m2 + m3 = 0` and the `j` satisfy the triangle rule with an integer sum.
pub fn wigner_3j(twice_j: [i64; 3], twice_m: [i64; 3]) -> Result<Radical, CouplingError> {
    for (j, m) in twice_j.iter().zip(&twice_m) {
        check_pair(*j, *m)?;
    }
    let [a, b, c] = twice_j;
    let [ma, mb, mc] = twice_m;
    let triangle = c <= a + b && c >= (a - b).abs();
    if ma + mb + mc != 0 || !triangle || (a + b + c) % 2 != 0 {
        return Ok(Radical::zero());
    }
    // Every combination below is an integer once halved.
    let h = |twice: i64| twice / 2;
    let delta_num = factorial(h(a + b - c)) * factorial(h(a - b + c)) * factorial(h(-a + b + c));
    let delta_den = factorial(h(a + b + c) + 1);
    let mut root_num = delta_num;
    for (j, m) in [(a, ma), (b, mb), (c, mc)] {
        root_num *= factorial(h(j + m)) * factorial(h(j - m));
    }
    let root = Rational::new(root_num, delta_den).expect("factorials are positive");
    let k_min = 0.max(h(b - c - ma)).max(h(a - c + mb));
    let k_max = h(a + b - c).min(h(a - ma)).min(h(b + mb));
    let mut sum = Rational::zero();
    for k in k_min..=k_max {
        let denom = factorial(k)
            * factorial(h(c - b + ma) + k)
            * factorial(h(c - a - mb) + k)
            * factorial(h(a + b - c) - k)
            * factorial(h(a - ma) - k)
            * factorial(h(b + mb) - k);
        let term = Rational::new(BigInt::one(), denom).expect("factorials are positive");
        sum = if k % 2 == 0 { sum + term } else { sum - term };
    }
    let phase = h(a - b - mc);
    let signed = if phase.rem_euclid(2) == 0 { sum } else { -sum };
    Ok(Radical::sqrt_of(&root).scale(&signed))
}

/// The Clebsch–Gordan coefficient `<j1 m1 j2 m2 | J M>` (Condon–Shortley phases), arguments doubled:
/// `(-1)^(j1-j2+M) sqrt(2J+1) (j1 j2 J; m1 m2 -M)` (Edmonds (1957), eq. 3.7.1).
pub fn clebsch_gordan(
    twice_j1: i64,
    twice_m1: i64,
    twice_j2: i64,
    twice_m2: i64,
    twice_j: i64,
    twice_m: i64,
) -> Result<Radical, CouplingError> {
    let symbol = wigner_3j([twice_j1, twice_j2, twice_j], [twice_m1, twice_m2, -twice_m])?;
    if symbol.is_zero() {
        return Ok(symbol);
    }
    let weight = Radical::sqrt_of(&Rational::from_i64(twice_j + 1));
    let phase = (twice_j1 - twice_j2 + twice_m) / 2;
    let value = symbol * weight;
    Ok(if phase.rem_euclid(2) == 0 { value } else { -value })
}

#[cfg(test)]
mod tests {
    use super::*;

    fn q(n: i64, d: i64) -> Rational {
        Rational::ratio(n, d).expect("non-zero denominator")
    }

    fn root(n: i64, d: i64) -> Radical {
        Radical::sqrt_of(&q(n, d))
    }

    #[test]
    fn clebsch_gordan_table_values() {
        // Two spins 1/2 (Condon & Shortley, The Theory of Atomic Spectra, 1935; the standard
        // table, values from memory): <1/2 1/2 1/2 -1/2|1 0> = 1/sqrt2, <1/2 -1/2 1/2 1/2|0 0> = -1/sqrt2.
        assert_eq!(clebsch_gordan(1, 1, 1, -1, 2, 0), Ok(root(1, 2)));
        assert_eq!(clebsch_gordan(1, 1, 1, -1, 0, 0), Ok(root(1, 2)));
        assert_eq!(clebsch_gordan(1, -1, 1, 1, 0, 0), Ok(-root(1, 2)));
        assert_eq!(clebsch_gordan(1, 1, 1, 1, 2, 2), Ok(Radical::one()));
        // j1 = 1, j2 = 1/2: <1 0 1/2 1/2|3/2 1/2> = sqrt(2/3), <1 1 1/2 -1/2|1/2 1/2> = sqrt(2/3),
        // <1 0 1/2 1/2|1/2 1/2> = -sqrt(1/3) (same table).
        assert_eq!(clebsch_gordan(2, 0, 1, 1, 3, 1), Ok(root(2, 3)));
        assert_eq!(clebsch_gordan(2, 2, 1, -1, 1, 1), Ok(root(2, 3)));
        assert_eq!(clebsch_gordan(2, 0, 1, 1, 1, 1), Ok(-root(1, 3)));
        // Selection rules give zero.
        assert_eq!(clebsch_gordan(2, 2, 2, 2, 2, 2), Ok(Radical::zero()));
        assert_eq!(clebsch_gordan(2, 0, 2, 0, 6, 0), Ok(Radical::zero()));
    }

    #[test]
    fn three_j_special_values() {
        // (j j 0; m -m 0) = (-1)^(j-m)/sqrt(2j+1) (Edmonds (1957), eq. 3.7.9).
        for twice_j in 0..6 {
            for twice_m in (-twice_j..=twice_j).step_by(2) {
                let phase = if ((twice_j - twice_m) / 2) % 2 == 0 { 1 } else { -1 };
                let expected = root(1, twice_j + 1).scale(&Rational::from_i64(phase));
                assert_eq!(wigner_3j([twice_j, twice_j, 0], [twice_m, -twice_m, 0]), Ok(expected));
            }
        }
        // (1 1 1; 0 0 0) = 0 by parity; (1 1 2; 0 0 0) = sqrt(2/15) (Edmonds (1957), Table 2,
        // value from memory, confirmed by the orthogonality test below).
        assert_eq!(wigner_3j([2, 2, 2], [0, 0, 0]), Ok(Radical::zero()));
        assert_eq!(wigner_3j([2, 2, 4], [0, 0, 0]), Ok(root(2, 15)));
    }

    #[test]
    fn orthogonality() {
        // Σ_{m1,m2} <j1 m1 j2 m2|J M><j1 m1 j2 m2|J' M'> = δ_JJ' δ_MM' (Condon & Shortley (1935);
        // any angular-momentum text).
        for (a, b) in [(1i64, 1i64), (2, 1), (2, 2), (3, 2), (4, 3)] {
            let totals: Vec<i64> = ((a - b).abs()..=a + b).step_by(2).collect();
            for &j in &totals {
                for &jp in &totals {
                    for m in (-j..=j).step_by(2) {
                        let mut acc = Radical::zero();
                        for m1 in (-a..=a).step_by(2) {
                            let m2 = m - m1;
                            if m2.abs() > b {
                                continue;
                            }
                            let x = clebsch_gordan(a, m1, b, m2, j, m).expect("valid");
                            let y = if m.abs() <= jp {
                                clebsch_gordan(a, m1, b, m2, jp, m).expect("valid")
                            } else {
                                Radical::zero()
                            };
                            acc += &(x * y);
                        }
                        let expected = if j == jp { Radical::one() } else { Radical::zero() };
                        assert_eq!(acc, expected, "j1={a}/2 j2={b}/2 J={j}/2 J'={jp}/2 M={m}/2");
                    }
                }
            }
        }
    }

    #[test]
    fn bad_arguments() {
        assert_eq!(wigner_3j([-2, 2, 0], [0, 0, 0]), Err(CouplingError::NegativeJ));
        assert_eq!(wigner_3j([2, 2, 0], [1, -1, 0]), Err(CouplingError::BadProjection));
        assert_eq!(wigner_3j([2, 2, 0], [4, -4, 0]), Err(CouplingError::BadProjection));
        assert_eq!(wigner_3j([4002, 2, 4000], [0, 0, 0]), Err(CouplingError::TooLarge));
    }
}
