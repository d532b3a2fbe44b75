//! `rotor(Jmax)`: a linear rigid rotor's states `|J, M>`, `J = 0..Jmax`, `M = J..-J`, with its
//! angular momentum and the orientation of its axis as spherical tensors built from exact 3j
//! symbols. The cut at `Jmax` stands for the infinite rotor: cleave warns when it matters.

use super::{Kind, LabelField, LocalOperator, Rung};
use crate::exact::angular::wigner_3j;
use crate::exact::{Field, Radical, RatFunc, Rational};
use crate::model::Operator;

/// A linear rotor with `J = 0..=j_max`.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Rotor {
    /// The highest `J` kept.
    pub j_max: usize,
}

impl Rotor {
    /// The index of `|J, M>`: blocks of increasing `J`, `M` descending within a block.
    fn index(j: usize, m: i64) -> usize {
        j * j + (j as i64 - m) as usize
    }
    /// `(J, M)` of state `local`.
    pub fn quantum_numbers(local: usize) -> (usize, i64) {
        let j = (0..).find(|j: &usize| (j + 1) * (j + 1) > local).expect("a block holds it");
        let m = j as i64 - (local - j * j) as i64;
        (j, m)
    }
    fn states(&self) -> impl Iterator<Item = (usize, usize, i64)> {
        (0..self.dimension()).map(|local| {
            let (j, m) = Rotor::quantum_numbers(local);
            (local, j, m)
        })
    }
    fn diagonal(&self, f: impl Fn(usize, i64) -> Rational) -> Operator {
        Operator::diagonal(
            self.states().map(|(_, j, m)| RatFunc::from_rational(&f(j, m))).collect(),
        )
    }
    /// `J+` within each `J` block: `<J, M+1|J+|J, M> = sqrt(J(J+1) - M(M+1))`.
    fn raising(&self) -> Operator {
        let triplets = self
            .states()
            .filter(|&(_, j, m)| m < j as i64)
            .map(|(local, j, m)| {
                let j = j as i64;
                let value = Rational::from_i64(j * (j + 1) - m * (m + 1));
                (local - 1, local, RatFunc::constant(Radical::sqrt_of(&value)))
            })
            .collect();
        Operator::from_triplets(self.dimension(), self.dimension(), triplets)
    }
    /// The spherical component `C^1_q` of the axis direction (Racah-normalized spherical
    /// harmonic, `C^1_0 = cos θ`):
    /// `<J' M'|C^k_q|J M> = (-1)^M' sqrt((2J'+1)(2J+1)) (J' k J; -M' q M)(J' k J; 0 0 0)`
    /// (Edmonds, Angular Momentum in Quantum Mechanics (1957), eqs. 5.4.1 and 5.4.5).
    fn orientation(&self, q: i64) -> Operator {
        let mut triplets = Vec::new();
        for (col, j, m) in self.states() {
            for jp in j.saturating_sub(1)..=(j + 1).min(self.j_max) {
                let mp = m + q;
                if mp.unsigned_abs() as usize > jp {
                    continue;
                }
                let (tj, tjp) = (2 * j as i64, 2 * jp as i64);
                let reduced = wigner_3j([tjp, 2, tj], [0, 0, 0]).expect("valid arguments");
                let angular = wigner_3j([tjp, 2, tj], [-2 * mp, 2 * q, 2 * m]).expect("valid");
                let value = reduced
                    * angular
                    * Radical::sqrt_of(&Rational::from_i64(
                        (2 * jp as i64 + 1) * (2 * j as i64 + 1),
                    ));
                if value.is_zero() {
                    continue;
                }
                let value = if mp.rem_euclid(2) == 0 { value } else { -value };
                triplets.push((Rotor::index(jp, mp), col, RatFunc::constant(value)));
            }
        }
        Operator::from_triplets(self.dimension(), self.dimension(), triplets)
    }
}

impl Kind for Rotor {
    fn declaration(&self) -> String {
        format!("rotor({})", self.j_max)
    }
    fn dimension(&self) -> usize {
        (self.j_max + 1) * (self.j_max + 1)
    }
    fn n_fields(&self) -> usize {
        2
    }
    fn label(&self, local: usize) -> Vec<LabelField> {
        let (j, m) = Rotor::quantum_numbers(local);
        vec![LabelField::Count(j as u64), LabelField::Signed(Rational::from_i64(m))]
    }
    fn find_state(&self, fields: &[&str]) -> Option<usize> {
        let [j, m] = fields else { return None };
        let j: usize = j.strip_prefix('+').unwrap_or(j).parse().ok()?;
        let m = super::spin::parse_signed(m)?;
        let m = m.is_integer().then(|| m.to_i64()).flatten()?;
        (j <= self.j_max && m.unsigned_abs() as usize <= j).then(|| Rotor::index(j, m))
    }
    fn operator(&self, name: &str) -> Option<LocalOperator> {
        let half = Rational::ratio(1, 2).expect("2 != 0");
        let root_half = RatFunc::constant(Radical::sqrt_of(&half));
        let matrix = match name {
            "j2" => self.diagonal(|j, _| Rational::from_i64((j * (j + 1)) as i64)),
            "z" => self.diagonal(|_, m| Rational::from_i64(m)),
            "up" => self.raising(),
            "down" => self.raising().adjoint(),
            "x" => {
                let up = self.raising();
                up.add(&up.adjoint()).scale(&RatFunc::from_rational(&half))
            }
            "y" => {
                let up = self.raising();
                let minus_i_half = RatFunc::constant(-Radical::i().scale(&half));
                up.sub(&up.adjoint()).scale(&minus_i_half)
            }
            "cos" | "nz" => self.orientation(0),
            "nplus" => self.orientation(1),
            "nminus" => self.orientation(-1),
            // n_x = (C_-1 - C_+1)/sqrt(2), n_y = i (C_-1 + C_+1)/sqrt(2).
            "nx" => self.orientation(-1).sub(&self.orientation(1)).scale(&root_half),
            "ny" => {
                let i_root_half = RatFunc::constant(Radical::i()) * &root_half;
                self.orientation(-1).add(&self.orientation(1)).scale(&i_root_half)
            }
            _ => return None,
        };
        Some(LocalOperator::Matrix(matrix))
    }
    fn operator_names(&self) -> &'static str {
        "`j2`, `x`, `y`, `z`, `up`, `down` (angular momentum) and `cos` (= `nz`), `nx`, `ny`, \
         `nplus`, `nminus` (the axis direction)"
    }
    fn declaration_with_top(&self, top: usize) -> String {
        Rotor { j_max: top }.declaration()
    }
    fn rung(&self, local: usize) -> Option<Rung> {
        Some(Rung { level: Rotor::quantum_numbers(local).0, top: self.j_max })
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// `<J+1, M|cos θ|J, M> = sqrt(((J+1)^2 - M^2)/((2J+1)(2J+3)))` (Townes & Schawlow,
    /// Microwave Spectroscopy (1955), ch. 10; the standard direction-cosine matrix element, from
    /// memory), and cos θ has no other entries.
    #[test]
    fn cos_theta_matrix_elements() {
        let rotor = Rotor { j_max: 4 };
        let Some(LocalOperator::Matrix(cos)) = rotor.operator("cos") else { panic!("cos") };
        for (col, j, m) in rotor.states() {
            for (row, jp, mp) in rotor.states() {
                let entry = cos.get(row, col);
                if jp == j + 1 && mp == m {
                    let (j, m) = (j as i64, m);
                    let square =
                        Rational::ratio((j + 1) * (j + 1) - m * m, (2 * j + 1) * (2 * j + 3))
                            .expect("non-zero");
                    assert_eq!(entry, RatFunc::constant(Radical::sqrt_of(&square)), "J={j} M={m}");
                } else if !(j == jp + 1 && mp == m) {
                    assert!(entry.is_zero(), "<{jp},{mp}|cos|{j},{m}>");
                }
            }
        }
        assert_eq!(cos, cos.adjoint(), "cos θ is Hermitian");
    }

    /// `n_x^2 + n_y^2 + n_z^2 = 1` on every state whose couplings stay below the cut.
    #[test]
    fn unit_vector() {
        let rotor = Rotor { j_max: 3 };
        let op = |name| match rotor.operator(name) {
            Some(LocalOperator::Matrix(m)) => m,
            _ => panic!("{name}"),
        };
        let (x, y, z) = (op("nx"), op("ny"), op("nz"));
        let square = x.mul(&x).add(&y.mul(&y)).add(&z.mul(&z));
        for (local, j, _) in rotor.states() {
            if j < 3 {
                assert_eq!(square.row(local).entries(), [(local, RatFunc::one())], "state {local}");
            }
        }
        assert_eq!(x, x.adjoint());
        assert_eq!(y, y.adjoint());
    }

    #[test]
    fn labels_round_trip() {
        let rotor = Rotor { j_max: 2 };
        for local in 0..rotor.dimension() {
            let label: Vec<String> = rotor.label(local).iter().map(ToString::to_string).collect();
            let fields: Vec<&str> = label.iter().map(String::as_str).collect();
            assert_eq!(rotor.find_state(&fields), Some(local), "{label:?}");
        }
        assert_eq!(rotor.label(0), [LabelField::Count(0), LabelField::Signed(Rational::zero())]);
    }
}
