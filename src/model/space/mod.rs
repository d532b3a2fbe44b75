//! Factor spaces: what one `space` declaration is. Start from [`Kind`], the one trait a kind of
//! space implements (its states and their labels, its named operators, its fermion parity, its
//! truncation rule), and [`Space`], a named instance. Each kind lives in a file of its own.

mod fermions;
mod ladder;
mod levels;
mod rotor;
mod spin;

use std::fmt;
use std::sync::Arc;

pub(crate) use fermions::mode_operator;
pub use fermions::{Fermions, IndexSet, IndexValue, ModeAction, MAX_MODES};
pub use ladder::Ladder;
pub use levels::Levels;
pub use rotor::Rotor;
pub use spin::{Spin, SpinOp};

use crate::exact::{Field, Radical, RatFunc, Rational};

use super::Operator;

/// One field of a state's label in a ket: `3`, `+1/2`, `L`.
#[derive(Clone, Debug, PartialEq, Eq)]
pub enum LabelField {
    /// A count: a Fock number, a rotor `J`, a mode occupation `0`/`1`.
    Count(u64),
    /// A projection written with its sign: `+1/2`, `0`, `-1`.
    Signed(Rational),
    /// A name: a level, or the occupied modes of a site (`updn`).
    Name(String),
}

impl fmt::Display for LabelField {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            LabelField::Count(n) => write!(f, "{n}"),
            LabelField::Signed(m) if m.is_positive() => write!(f, "+{m}"),
            LabelField::Signed(m) => write!(f, "{m}"),
            LabelField::Name(name) => write!(f, "{name}"),
        }
    }
}

/// A named operator of a space (`q.lower`, `c[1, up].create`).
#[derive(Clone, Debug)]
pub enum LocalOperator {
    /// A matrix on the space's states, in its state order.
    Matrix(Operator),
    /// A creation, annihilation or number operator of one fermionic mode, applied through the
    /// Jordan–Wigner ordering of [`Fermions`].
    Mode {
        /// The mode's position in the Jordan–Wigner order.
        mode: usize,
        /// What it does.
        action: ModeAction,
    },
}

/// How a truncated space's states sit on its ladder: the wave operator climbs it one coupling at
/// a time, and states near the top lack the couplings of the untruncated space.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct Rung {
    /// The rung of this state (oscillator: `n`; rotor: `J`).
    pub level: usize,
    /// The top rung kept.
    pub top: usize,
}

/// A kind of factor space. Implementing this trait (in a file of its own) is all a new kind
/// needs; `lower` adds only its declaration syntax.
pub trait Kind: fmt::Debug + Send + Sync {
    /// The declaration as written in a model: `spin(3/2)`, `oscillator(40)`.
    fn declaration(&self) -> String;
    /// Number of states.
    fn dimension(&self) -> usize;
    /// How many comma-separated fields a state of this space takes in a ket (a rotor's `J, M`
    /// takes two; a fermion space takes one per site).
    fn n_fields(&self) -> usize {
        1
    }
    /// The label of state `local`: [`Kind::n_fields`] fields.
    fn label(&self, local: usize) -> Vec<LabelField>;
    /// The state whose label is `fields` as written (`["+1/2"]`, `["2", "-1"]`), if any.
    fn find_state(&self, fields: &[&str]) -> Option<usize> {
        if fields.len() != self.n_fields() {
            return None;
        }
        (0..self.dimension()).find(|&local| {
            let label = self.label(local);
            label.iter().zip(fields).all(|(field, text)| field.to_string() == *text)
        })
    }
    /// The operator `space.name`, if the kind has one by that name.
    fn operator(&self, name: &str) -> Option<LocalOperator>;
    /// What `space.name` may be, for messages: "`lower`, `raise` and `n`".
    fn operator_names(&self) -> &'static str;
    /// Whether ket-bras `|a><b|` and `matrix(...)` may act on this space.
    fn has_ket_bras(&self) -> bool {
        true
    }
    /// For a space that stands for a larger one cut off (an oscillator, a rotor), the rung of
    /// state `local`; `None` for a space that is the whole model.
    fn rung(&self, _local: usize) -> Option<Rung> {
        None
    }
    /// The declaration of this kind with its top rung at `top` (for a cut-off space: the cut
    /// that a warning recommends).
    fn declaration_with_top(&self, _top: usize) -> String {
        self.declaration()
    }
    /// The fermionic modes, for a space of fermions.
    fn fermions(&self) -> Option<&Fermions> {
        None
    }
}

/// One declared factor space: a name and a kind.
#[derive(Clone, Debug)]
pub struct Space {
    /// The name it was declared with (`q` in `space q = ...`, `s[2]` for a member of a family).
    pub name: String,
    kind: Arc<dyn Kind>,
}

impl PartialEq for Space {
    fn eq(&self, other: &Space) -> bool {
        self.name == other.name && self.kind.declaration() == other.kind.declaration()
    }
}

impl Eq for Space {}

impl Space {
    /// A space named `name` of kind `kind`.
    pub fn new(name: impl Into<String>, kind: impl Kind + 'static) -> Space {
        Space { name: name.into(), kind: Arc::new(kind) }
    }
    /// Its kind.
    pub fn kind(&self) -> &dyn Kind {
        self.kind.as_ref()
    }
    /// Number of states of this factor.
    pub fn dimension(&self) -> usize {
        self.kind.dimension()
    }
    /// The label of local state `idx` as it stands in a ket (fields joined by `, `).
    pub fn state_label(&self, idx: usize) -> String {
        let fields: Vec<String> = self.kind.label(idx).iter().map(ToString::to_string).collect();
        fields.join(", ")
    }
    /// Whether this space holds fermions (its odd operators anticommute with those of later
    /// fermion spaces).
    pub fn is_fermionic(&self) -> bool {
        self.kind.fermions().is_some()
    }
    /// The oscillator's lowering operator `a|n> = sqrt(n)|n-1>` on `n_states` states.
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
    /// Spin operators with Condon–Shortley phases (see [`SpinOp`]).
    pub fn spin(twice_j: u32, op: SpinOp) -> Operator {
        spin::spin_operator(twice_j, op)
    }
    /// The ket-bra `|row><col|` on a factor of dimension `n`.
    pub fn ket_bra(n: usize, row: usize, col: usize) -> Operator {
        Operator::from_triplets(n, n, vec![(row, col, RatFunc::one())])
    }
}
