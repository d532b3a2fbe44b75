//! `spin(j)`: states `m = j, j-1, ..., -j` in that order, with the angular-momentum operators.

use super::{Kind, LabelField, LocalOperator};
use crate::exact::{Field, Radical, RatFunc, Rational};
use crate::model::Operator;

/// A spin `j`: `2j + 1` states `m = j, ..., -j`.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Spin {
    /// `2j`, a positive integer.
    pub twice_j: u32,
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

impl Spin {
    /// `m` of state `idx`.
    pub fn m(&self, idx: usize) -> Rational {
        Rational::ratio(self.twice_j as i64 - 2 * idx as i64, 2).expect("2 != 0")
    }
}

/// Parses a signed label `+1/2`, `-3`, `0` as a rational number.
pub(super) fn parse_signed(text: &str) -> Option<Rational> {
    let (negative, unsigned) = match text.as_bytes().first() {
        Some(b'-') => (true, &text[1..]),
        Some(b'+') => (false, &text[1..]),
        _ => (false, text),
    };
    let (numer, denom) = unsigned.split_once('/').unwrap_or((unsigned, "1"));
    if numer.is_empty() || !numer.bytes().chain(denom.bytes()).all(|b| b.is_ascii_digit()) {
        return None;
    }
    let numer = num_bigint::BigInt::parse_bytes(numer.as_bytes(), 10)?;
    let denom = num_bigint::BigInt::parse_bytes(denom.as_bytes(), 10)?;
    let value = Rational::new(numer, denom)?;
    Some(if negative { -value } else { value })
}

impl Kind for Spin {
    fn declaration(&self) -> String {
        match self.twice_j % 2 {
            0 => format!("spin({})", self.twice_j / 2),
            _ => format!("spin({}/2)", self.twice_j),
        }
    }
    fn dimension(&self) -> usize {
        self.twice_j as usize + 1
    }
    fn label(&self, local: usize) -> Vec<LabelField> {
        vec![LabelField::Signed(self.m(local))]
    }
    fn find_state(&self, fields: &[&str]) -> Option<usize> {
        let [text] = fields else { return None };
        let twice_m = (parse_signed(text)? * Rational::from_i64(2)).to_i64()?;
        let twice_j = i64::from(self.twice_j);
        // States run m = j, j-1, ..., -j, so m sits at index j - m.
        if twice_m.abs() > twice_j || (twice_j - twice_m) % 2 != 0 {
            return None;
        }
        usize::try_from((twice_j - twice_m) / 2).ok()
    }
    fn operator(&self, name: &str) -> Option<LocalOperator> {
        let op = match name {
            "x" => SpinOp::X,
            "y" => SpinOp::Y,
            "z" => SpinOp::Z,
            "up" => SpinOp::Up,
            "down" => SpinOp::Down,
            _ => return None,
        };
        Some(LocalOperator::Matrix(spin_operator(self.twice_j, op)))
    }
    fn operator_names(&self) -> &'static str {
        "`x`, `y`, `z`, `up` and `down`"
    }
}

/// Spin operators with Condon–Shortley phases:
/// `<m+1|J+|m> = sqrt(j(j+1) - m(m+1))`, `Jx = (J+ + J-)/2`, `Jy = (J+ - J-)/(2i)`.
pub(super) fn spin_operator(twice_j: u32, op: SpinOp) -> Operator {
    let n = twice_j as usize + 1;
    let j = Rational::ratio(twice_j as i64, 2).expect("nonzero denominator");
    let m_of = |idx: usize| Rational::ratio(twice_j as i64 - 2 * idx as i64, 2).expect("2 != 0");
    // J+ maps index k (m) to index k-1 (m+1).
    let up = || {
        let triplets = (1..n)
            .map(|k| {
                let m = m_of(k);
                let value =
                    j.clone() * (j.clone() + Rational::one()) - m.clone() * (m + Rational::one());
                (k - 1, k, RatFunc::constant(Radical::sqrt_of(&value)))
            })
            .collect();
        Operator::from_triplets(n, n, triplets)
    };
    let half = RatFunc::from_rational(&Rational::ratio(1, 2).expect("2 != 0"));
    match op {
        SpinOp::Up => up(),
        SpinOp::Down => up().adjoint(),
        SpinOp::Z => Operator::diagonal((0..n).map(|k| RatFunc::from_rational(&m_of(k))).collect()),
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
