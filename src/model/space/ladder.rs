//! `oscillator(N)` and `ladder(N)`: the states `|0> ... |N-1>` with `lower`, `raise` and `n`.
//! An oscillator stands for the infinite one cut at N states (cleave warns when the cut can
//! change a result); a ladder is the model itself (a transmon's or a qudit's few levels).

use super::{Kind, LabelField, LocalOperator, Rung, Space};

/// `N` states of a bosonic ladder.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Ladder {
    /// Number of states kept.
    pub n_states: usize,
    /// Whether the ladder stands for an infinite oscillator cut off (`oscillator(N)`), rather
    /// than being the model's own few levels (`ladder(N)`).
    pub truncated: bool,
}

impl Ladder {
    /// `oscillator(N)`: the lowest `N` Fock states of an infinite oscillator.
    pub fn oscillator(n_states: usize) -> Ladder {
        Ladder { n_states, truncated: true }
    }
    /// `ladder(N)`: `N` levels that are the whole model.
    pub fn physical(n_states: usize) -> Ladder {
        Ladder { n_states, truncated: false }
    }
}

impl Kind for Ladder {
    fn declaration(&self) -> String {
        let kind = if self.truncated { "oscillator" } else { "ladder" };
        format!("{kind}({})", self.n_states)
    }
    fn dimension(&self) -> usize {
        self.n_states
    }
    fn label(&self, local: usize) -> Vec<LabelField> {
        vec![LabelField::Count(local as u64)]
    }
    fn find_state(&self, fields: &[&str]) -> Option<usize> {
        let [text] = fields else { return None };
        let text = text.strip_prefix('+').unwrap_or(text);
        if text.is_empty() || !text.bytes().all(|b| b.is_ascii_digit()) {
            return None;
        }
        text.parse::<usize>().ok().filter(|n| *n < self.n_states)
    }
    fn operator(&self, name: &str) -> Option<LocalOperator> {
        let matrix = match name {
            "lower" => Space::lower(self.n_states),
            "raise" => Space::raise(self.n_states),
            "n" => Space::number(self.n_states),
            _ => return None,
        };
        Some(LocalOperator::Matrix(matrix))
    }
    fn operator_names(&self) -> &'static str {
        "`lower`, `raise` and `n`"
    }
    fn declaration_with_top(&self, top: usize) -> String {
        Ladder { n_states: top + 1, truncated: self.truncated }.declaration()
    }
    fn rung(&self, local: usize) -> Option<Rung> {
        self.truncated.then(|| Rung { level: local, top: self.n_states - 1 })
    }
}
