//! `levels(A, B, ...)`: named states, reached only through ket-bras and `matrix(...)`.
//! Such a space is taken as the whole model: no state stands for a cut-off larger space.

use super::{Kind, LabelField, LocalOperator};

/// Named states in the given order.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Levels {
    /// The state names.
    pub labels: Vec<String>,
}

impl Kind for Levels {
    fn declaration(&self) -> String {
        format!("levels({})", self.labels.join(", "))
    }
    fn dimension(&self) -> usize {
        self.labels.len()
    }
    fn label(&self, local: usize) -> Vec<LabelField> {
        vec![LabelField::Name(self.labels[local].clone())]
    }
    fn find_state(&self, fields: &[&str]) -> Option<usize> {
        let [text] = fields else { return None };
        self.labels.iter().position(|l| l == text)
    }
    fn operator(&self, _name: &str) -> Option<LocalOperator> {
        None
    }
    fn operator_names(&self) -> &'static str {
        "ket-bras of its states, like `|A><B|`"
    }
}
