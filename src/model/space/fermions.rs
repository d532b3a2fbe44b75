//! `fermions(1..4, [up, dn])`: fermionic modes labelled by one or more index sets, as a space of
//! occupation states.
//!
//! The modes are ordered row-major (the last index runs fastest: `c[1,up], c[1,dn], c[2,up], ...`),
//! and that order is the Jordan–Wigner order: the occupation state written `|n_1, n_2, ...>`
//! is `(c_1^dag)^n_1 (c_2^dag)^n_2 ... |vac>`, so `c_k` and `c_k^dag` carry the sign
//! `(-1)^(number of occupied modes before k)`. That makes `{c_j, c_k^dag} = δ_jk` and
//! `{c_j, c_k} = 0` on every pair of modes. Operators of a later fermion space also count the
//! occupation of every earlier one (the string runs across spaces in declaration order).
//!
//! A state's label has one field per value of the first index (per site): the occupied modes of
//! that site written one after another by their remaining indices (`updn`, `up`), or `0` when the
//! site is empty; with a single index set each field is the occupation `0` or `1`.

use std::fmt;

use super::{Kind, LabelField, LocalOperator};

/// The most modes a fermion space may have (its occupation states are indexed by a `u64`).
pub const MAX_MODES: usize = 40;

/// A set of index values: `1..4` or `[up, dn]`.
#[derive(Clone, Debug, PartialEq, Eq)]
pub enum IndexSet {
    /// The integers `first..=last`.
    Range {
        /// The first value.
        first: i64,
        /// The last value (inclusive).
        last: i64,
    },
    /// Named values in order.
    Names(Vec<String>),
}

/// One index value: an integer or a name.
#[derive(Clone, Debug, PartialEq, Eq, PartialOrd, Ord, Hash)]
pub enum IndexValue {
    /// `3`
    Int(i64),
    /// `up`
    Name(String),
}

impl fmt::Display for IndexValue {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            IndexValue::Int(n) => write!(f, "{n}"),
            IndexValue::Name(name) => write!(f, "{name}"),
        }
    }
}

impl fmt::Display for IndexSet {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            IndexSet::Range { first, last } => write!(f, "{first}..{last}"),
            IndexSet::Names(names) => write!(f, "[{}]", names.join(", ")),
        }
    }
}

impl IndexSet {
    /// Number of values.
    pub fn len(&self) -> usize {
        match self {
            IndexSet::Range { first, last } => usize::try_from(last - first + 1).unwrap_or(0),
            IndexSet::Names(names) => names.len(),
        }
    }
    /// Whether the set has no value.
    pub fn is_empty(&self) -> bool {
        self.len() == 0
    }
    /// The values in order.
    pub fn values(&self) -> Vec<IndexValue> {
        match self {
            IndexSet::Range { first, last } => (*first..=*last).map(IndexValue::Int).collect(),
            IndexSet::Names(names) => names.iter().cloned().map(IndexValue::Name).collect(),
        }
    }
    /// The position of `value` in the set.
    pub fn position(&self, value: &IndexValue) -> Option<usize> {
        match (self, value) {
            (IndexSet::Range { first, last }, IndexValue::Int(n)) => {
                (first..=last).contains(&n).then(|| (n - first) as usize)
            }
            (IndexSet::Names(names), IndexValue::Name(name)) => {
                names.iter().position(|n| n == name)
            }
            _ => None,
        }
    }
}

/// What a mode operator does.
#[derive(Clone, Copy, Debug, PartialEq, Eq, PartialOrd, Ord, Hash)]
pub enum ModeAction {
    /// `c.create`, `c^dag`.
    Create,
    /// `c.annihilate`, `c`.
    Annihilate,
    /// `c.n`, `c^dag c`.
    Number,
}

impl ModeAction {
    /// The Hermitian adjoint.
    pub fn adjoint(self) -> ModeAction {
        match self {
            ModeAction::Create => ModeAction::Annihilate,
            ModeAction::Annihilate => ModeAction::Create,
            ModeAction::Number => ModeAction::Number,
        }
    }
}

/// Fermionic modes labelled by the product of `index_sets`.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Fermions {
    index_sets: Vec<IndexSet>,
    n_modes: usize,
}

impl Fermions {
    /// Modes for every combination of the index sets; `None` when a set is empty or there are
    /// more than [`MAX_MODES`] modes.
    pub fn new(index_sets: Vec<IndexSet>) -> Option<Fermions> {
        let mut n_modes: usize = 1;
        for set in &index_sets {
            n_modes = n_modes.checked_mul(set.len())?;
        }
        if index_sets.is_empty() || n_modes == 0 || n_modes > MAX_MODES {
            return None;
        }
        Some(Fermions { index_sets, n_modes })
    }
    /// The index sets.
    pub fn index_sets(&self) -> &[IndexSet] {
        &self.index_sets
    }
    /// Number of modes.
    pub fn n_modes(&self) -> usize {
        self.n_modes
    }
    /// The Jordan–Wigner position of the mode with these index values.
    pub fn mode(&self, index: &[IndexValue]) -> Option<usize> {
        if index.len() != self.index_sets.len() {
            return None;
        }
        let mut acc = 0;
        for (set, value) in self.index_sets.iter().zip(index) {
            acc = acc * set.len() + set.position(value)?;
        }
        Some(acc)
    }
    /// The index values of mode `mode`.
    pub fn mode_index(&self, mut mode: usize) -> Vec<IndexValue> {
        let mut res = Vec::with_capacity(self.index_sets.len());
        for set in self.index_sets.iter().rev() {
            res.push(set.values()[mode % set.len()].clone());
            mode /= set.len();
        }
        res.reverse();
        res
    }
    /// The bit of mode `mode` in an occupation state: the first mode is the highest bit, so the
    /// vacuum comes first and states sort by the occupation of the first modes.
    fn bit(&self, mode: usize) -> u64 {
        1u64 << (self.n_modes - 1 - mode)
    }
    /// `action` of mode `mode` on occupation state `local`: the new state and whether the
    /// Jordan–Wigner sign is negative; `None` when the result is zero.
    pub fn act(&self, local: u64, mode: usize, action: ModeAction) -> Option<(u64, bool)> {
        let bit = self.bit(mode);
        let occupied = local & bit != 0;
        // Modes before `mode` are the higher bits.
        let before = local & !(bit | (bit - 1));
        let negative = before.count_ones() % 2 == 1;
        match action {
            ModeAction::Number => occupied.then_some((local, false)),
            ModeAction::Create => (!occupied).then_some((local | bit, negative)),
            ModeAction::Annihilate => occupied.then_some((local & !bit, negative)),
        }
    }
    /// Modes per value of the first index.
    fn per_site(&self) -> usize {
        self.n_modes / self.index_sets[0].len()
    }
    /// The label of mode `mode` within its site: its remaining index values written together.
    fn within_site(&self, mode: usize) -> String {
        self.mode_index(mode)[1..].iter().map(ToString::to_string).collect()
    }
}

impl Kind for Fermions {
    fn declaration(&self) -> String {
        let sets: Vec<String> = self.index_sets.iter().map(ToString::to_string).collect();
        format!("fermions({})", sets.join(", "))
    }
    fn dimension(&self) -> usize {
        1usize << self.n_modes
    }
    fn n_fields(&self) -> usize {
        self.index_sets[0].len()
    }
    fn label(&self, local: usize) -> Vec<LabelField> {
        let per_site = self.per_site();
        (0..self.n_fields())
            .map(|site| {
                let modes = site * per_site..(site + 1) * per_site;
                let occupied: Vec<usize> =
                    modes.filter(|&m| local as u64 & self.bit(m) != 0).collect();
                if per_site == 1 {
                    LabelField::Count(occupied.len() as u64)
                } else if occupied.is_empty() {
                    LabelField::Count(0)
                } else {
                    LabelField::Name(occupied.iter().map(|&m| self.within_site(m)).collect())
                }
            })
            .collect()
    }
    fn find_state(&self, fields: &[&str]) -> Option<usize> {
        if fields.len() != self.n_fields() {
            return None;
        }
        let per_site = self.per_site();
        let mut local = 0u64;
        for (site, text) in fields.iter().enumerate() {
            let first = site * per_site;
            let occupied = if per_site == 1 {
                match *text {
                    "0" => vec![],
                    "1" => vec![first],
                    _ => return None,
                }
            } else if *text == "0" {
                vec![]
            } else {
                let names: Vec<String> =
                    (first..first + per_site).map(|m| self.within_site(m)).collect();
                split_site(text, &names, 0)?.into_iter().map(|k| first + k).collect()
            };
            for mode in occupied {
                local |= self.bit(mode);
            }
        }
        usize::try_from(local).ok()
    }
    fn operator(&self, _name: &str) -> Option<LocalOperator> {
        None
    }
    fn operator_names(&self) -> &'static str {
        "modes, written with their index: `c[1, up].create`, `c[1, up].annihilate`, `c[1, up].n`"
    }
    fn has_ket_bras(&self) -> bool {
        false
    }
    fn fermions(&self) -> Option<&Fermions> {
        Some(self)
    }
}

/// The modes (positions in `names`, increasing from `from`) whose names written one after another
/// give `text`.
fn split_site(text: &str, names: &[String], from: usize) -> Option<Vec<usize>> {
    if text.is_empty() {
        return Some(Vec::new());
    }
    (from..names.len()).find_map(|k| {
        let rest = text.strip_prefix(names[k].as_str())?;
        let mut tail = split_site(rest, names, k + 1)?;
        tail.insert(0, k);
        Some(tail)
    })
}

/// The mode operators of one fermion space as a local operator.
pub(crate) fn mode_operator(fermions: &Fermions, mode: usize, name: &str) -> Option<LocalOperator> {
    let action = match name {
        "create" => ModeAction::Create,
        "annihilate" => ModeAction::Annihilate,
        "n" => ModeAction::Number,
        _ => return None,
    };
    (mode < fermions.n_modes).then_some(LocalOperator::Mode { mode, action })
}

#[cfg(test)]
mod tests {
    use super::*;

    fn hubbard(sites: i64) -> Fermions {
        Fermions::new(vec![
            IndexSet::Range { first: 1, last: sites },
            IndexSet::Names(vec!["up".into(), "dn".into()]),
        ])
        .expect("small")
    }

    #[test]
    fn labels_round_trip() {
        let space = hubbard(3);
        assert_eq!(space.dimension(), 64);
        for local in 0..space.dimension() {
            let label: Vec<String> = space.label(local).iter().map(ToString::to_string).collect();
            let fields: Vec<&str> = label.iter().map(String::as_str).collect();
            assert_eq!(space.find_state(&fields), Some(local), "{label:?}");
        }
        // c[1,up] is the first mode, the highest bit.
        let up1 = space.mode(&[IndexValue::Int(1), IndexValue::Name("up".into())]);
        assert_eq!(up1, Some(0));
        assert_eq!(space.find_state(&["up", "0", "updn"]), Some(0b10_00_11));
        assert_eq!(space.find_state(&["dnup", "0", "0"]), None, "modes in order only");
    }

    #[test]
    fn jordan_wigner_signs() {
        let space = hubbard(2);
        // |up, dn> = c1up^dag c2dn^dag |vac>; annihilating c2dn passes c1up: sign -1.
        let state = space.find_state(&["up", "dn"]).expect("a state") as u64;
        let dn2 = space.mode(&[IndexValue::Int(2), IndexValue::Name("dn".into())]).expect("mode");
        assert_eq!(space.act(state, dn2, ModeAction::Annihilate), Some((0b1000, true)));
        assert_eq!(space.act(state, 0, ModeAction::Annihilate), Some((0b0001, false)));
        assert_eq!(space.act(state, 0, ModeAction::Create), None, "Pauli exclusion");
    }
}
