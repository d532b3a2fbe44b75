//! The three kinds of factor space and their built-in operators.

use crate::exact::{Field, Radical, RatFunc, Rational};

use super::Operator;

/// What kind of factor a space is.
#[derive(Clone, Debug, PartialEq, Eq)]
pub enum SpaceKind {
    /// `oscillator(N)`: Fock states `|0> ... |N-1>`, truncated above.
    Oscillator {
        /// Number of Fock states kept.
        n_states: usize,
    },
    /// `spin(j)`: states `m = j, j-1, ..., -j` in that order.
    Spin {
        /// `2j`, a positive integer.
        twice_j: u32,
    },
    /// `levels(A, B, ...)`: named states in the given order.
    Levels {
        /// The state names.
        labels: Vec<String>,
    },
}

/// A spin operator of a `spin(j)` space.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum SpinOp {
    /// `s.x`
    X,
    /// `s.y`
    Y,
    /// `s.z`
    Z,
    /// `s.up` (raising, `J+`)
    Up,
    /// `s.down` (lowering, `J-`)
    Down,
}

/// One declared factor space.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Space {
    /// The name it was declared with (`q` in `space q = ...`), used in qualified labels.
    pub name: String,
    /// Its kind.
    pub kind: SpaceKind,
}

impl Space {
    /// Number of states of this factor.
    pub fn dimension(&self) -> usize {
        match &self.kind {
            SpaceKind::Oscillator { n_states } => *n_states,
            SpaceKind::Spin { twice_j } => *twice_j as usize + 1,
            SpaceKind::Levels { labels } => labels.len(),
        }
    }
    /// The label of local state `idx`: the Fock number, `m` as a signed fraction, or the level name.
    pub fn state_label(&self, idx: usize) -> String {
        match &self.kind {
            SpaceKind::Oscillator { .. } => idx.to_string(),
            SpaceKind::Spin { twice_j } => {
                let twice_m = *twice_j as i64 - 2 * idx as i64;
                match twice_m {
                    0 => "0".to_string(),
                    _ if twice_m % 2 == 0 => format!("{:+}", twice_m / 2),
                    _ => format!("{:+}/2", twice_m),
                }
            }
            SpaceKind::Levels { labels } => labels[idx].clone(),
        }
    }
    /// `m` of local spin state `idx` (`None` for other kinds).
    pub fn spin_m(&self, idx: usize) -> Option<Rational> {
        match &self.kind {
            SpaceKind::Spin { twice_j } => Rational::ratio(*twice_j as i64 - 2 * idx as i64, 2),
            _ => None,
        }
    }
    /// The oscillator's lowering operator `a|n> = sqrt(n)|n-1>`.
    pub fn lower(n_states: usize) -> Operator {
        let triplets = (1..n_states)
            .map(|n| (n - 1, n, RatFunc::constant(Radical::sqrt_of(&Rational::from_i64(n as i64)))))
            .collect();
        Operator::from_triplets(n_states, n_states, triplets)
    }
    /// The oscillator's raising operator `a^dag|n> = sqrt(n+1)|n+1>`, cut at the top state.
    pub fn raise(n_states: usize) -> Operator {
        Space::lower(n_states).adjoint()
    }
    /// The number operator `a^dag a`, diagonal `0, 1, ..., N-1` (exact even at the cut).
    pub fn number(n_states: usize) -> Operator {
        Operator::diagonal((0..n_states).map(|n| RatFunc::from_i64(n as i64)).collect())
    }
    /// Spin operators with Condon–Shortley phases:
    /// `<m+1|J+|m> = sqrt(j(j+1) - m(m+1))`, `Jx = (J+ + J-)/2`, `Jy = (J+ - J-)/(2i)`.
    pub fn spin(twice_j: u32, op: SpinOp) -> Operator {
        let n = twice_j as usize + 1;
        let j = Rational::ratio(twice_j as i64, 2).expect("nonzero denominator");
        let m_of =
            |idx: usize| Rational::ratio(twice_j as i64 - 2 * idx as i64, 2).expect("2 != 0");
        // J+ maps index k (m) to index k-1 (m+1).
        let up = || {
            let triplets = (1..n)
                .map(|k| {
                    let m = m_of(k);
                    let value = j.clone() * (j.clone() + Rational::one())
                        - m.clone() * (m + Rational::one());
                    (k - 1, k, RatFunc::constant(Radical::sqrt_of(&value)))
                })
                .collect();
            Operator::from_triplets(n, n, triplets)
        };
        let half = RatFunc::from_rational(&Rational::ratio(1, 2).expect("2 != 0"));
        match op {
            SpinOp::Up => up(),
            SpinOp::Down => up().adjoint(),
            SpinOp::Z => {
                Operator::diagonal((0..n).map(|k| RatFunc::from_rational(&m_of(k))).collect())
            }
            SpinOp::X => {
                let u = up();
                u.add(&u.adjoint()).scale(&half)
            }
            SpinOp::Y => {
                // (J+ - J-)/(2i) = -i/2 (J+ - J-).
                let u = up();
                let minus_i_half = RatFunc::constant(-Radical::i()) * &half;
                u.sub(&u.adjoint()).scale(&minus_i_half)
            }
        }
    }
    /// The ket-bra `|row><col|` on a factor of dimension `n`.
    pub fn ket_bra(n: usize, row: usize, col: usize) -> Operator {
        Operator::from_triplets(n, n, vec![(row, col, RatFunc::one())])
    }
}
