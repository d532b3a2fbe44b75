//! Typed syntax tree of a `.clv` model, built by [`crate::syntax::parse`].
//! Every node carries a [`Span`]. Names are still unresolved here: `q.lower` is a member access on
//! some name `q`, and `lower` decides whether that is a space with such an operator.
//!
//! Running example: `V = g * |L><R| + 2` is a [`Statement::Term`] whose value is a
//! [`ExprKind::Binary`] `+` of a `*` (name `g`, a [`ExprKind::KetBra`]) and the number `2`.

use crate::diagnostics::Span;

/// A whole model file: its statements in source order.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct File {
    /// The statements; blank and comment-only lines leave none.
    pub statements: Vec<Statement>,
    /// The whole text.
    pub span: Span,
}

/// One line of a model.
#[derive(Clone, Debug, PartialEq, Eq)]
pub enum Statement {
    /// `param g, U > 0`
    Param(ParamDecl),
    /// `space q = oscillator(40)`
    Space(SpaceDecl),
    /// `let x = q.lower + q.raise`
    Let(LetDecl),
    /// `H0 = q.n`, `V = g * x`, `V2 = ...`
    Term(TermDef),
    /// `focus 0, delta`
    Focus(FocusDecl),
    /// `order 4`
    Order(OrderDecl),
    /// `sector N = 3, Sz = 1/2`
    Sector(SectorDecl),
    /// `quantity ZZ = E|1, 1> - E|1, 0> - E|0, 1> + E|0, 0>`
    Quantity(QuantityDecl),
}

impl Statement {
    /// The span of the whole statement.
    pub fn span(&self) -> Span {
        match self {
            Statement::Param(decl) => decl.span,
            Statement::Space(decl) => decl.span,
            Statement::Let(decl) => decl.span,
            Statement::Term(def) => def.span,
            Statement::Focus(decl) => decl.span,
            Statement::Order(decl) => decl.span,
            Statement::Sector(decl) => decl.span,
            Statement::Quantity(decl) => decl.span,
        }
    }
}

/// A name as written: `g`, `H0`, `q`.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Ident {
    /// The name.
    pub name: String,
    /// Where it is written.
    pub span: Span,
}

/// `param g, t` or `param U > 0`: one or more real symbols.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct ParamDecl {
    /// The declared parameters in order.
    pub items: Vec<ParamItem>,
    /// The whole statement.
    pub span: Span,
}

/// `g` or `U > 0` inside a `param` line.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct ParamItem {
    /// The parameter's name.
    pub name: Ident,
    /// Declared `> 0`.
    pub positive: bool,
    /// The name and its `> 0`.
    pub span: Span,
}

/// `space s = spin(3/2)`: one factor of the product space, or `space s[1..4] = spin(1/2)`: a
/// family of them.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct SpaceDecl {
    /// The space's name.
    pub name: Ident,
    /// `[1..4]`: the index sets of a family, if it is one.
    pub family: Option<Vec<IndexSetExpr>>,
    /// What kind of space it is.
    pub kind: SpaceKind,
    /// The whole statement.
    pub span: Span,
}

/// The right-hand side of a `space` declaration.
#[derive(Clone, Debug, PartialEq, Eq)]
pub enum SpaceKind {
    /// `oscillator(40)`: Fock states `|0> ... |39>`.
    Oscillator {
        /// The number of states kept, an expression that must be a positive integer.
        n_states: Expr,
        /// `oscillator(...)`.
        span: Span,
    },
    /// `spin(3/2)`: states `m = j ... -j`.
    Spin {
        /// `j`, an expression that must be a positive multiple of 1/2.
        j: Expr,
        /// `spin(...)`.
        span: Span,
    },
    /// `levels(L, R, B)`: named states.
    Levels {
        /// The state names in order.
        labels: Vec<Ident>,
        /// `levels(...)`.
        span: Span,
    },
    /// `ladder(3)`: states `|0> ... |2>` that are the whole model.
    Ladder {
        /// The number of states, an expression that must be a positive integer.
        n_states: Expr,
        /// `ladder(...)`.
        span: Span,
    },
    /// `rotor(4)`: a linear rotor's `|J, M>` for `J = 0..4`.
    Rotor {
        /// The highest `J`, an expression that must be a non-negative integer.
        j_max: Expr,
        /// `rotor(...)`.
        span: Span,
    },
    /// `fermions(1..4, [up, dn])`: one fermionic mode per combination of the index sets.
    Fermions {
        /// The index sets.
        index_sets: Vec<IndexSetExpr>,
        /// `fermions(...)`.
        span: Span,
    },
}

/// A set of index values: `1..N` or `[up, dn]`.
#[derive(Clone, Debug, PartialEq, Eq)]
pub enum IndexSetExpr {
    /// `1..N`: the integers from the first to the last, both included.
    Range {
        /// The first value.
        first: Box<Expr>,
        /// The last value.
        last: Box<Expr>,
        /// `1..N`.
        span: Span,
    },
    /// `[up, dn]`: named values.
    Names {
        /// The names in order.
        names: Vec<Ident>,
        /// `[...]`.
        span: Span,
    },
}

impl IndexSetExpr {
    /// The span of the whole set.
    pub fn span(&self) -> Span {
        match self {
            IndexSetExpr::Range { span, .. } | IndexSetExpr::Names { span, .. } => *span,
        }
    }
}

/// `i in 1..N` inside a `sum(...)`.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Binder {
    /// The index variable.
    pub name: Ident,
    /// The values it runs over.
    pub set: IndexSetExpr,
    /// The whole binder.
    pub span: Span,
}

impl SpaceKind {
    /// The span of the whole kind, e.g. `spin(3/2)`.
    pub fn span(&self) -> Span {
        match self {
            SpaceKind::Oscillator { span, .. }
            | SpaceKind::Spin { span, .. }
            | SpaceKind::Levels { span, .. }
            | SpaceKind::Ladder { span, .. }
            | SpaceKind::Rotor { span, .. }
            | SpaceKind::Fermions { span, .. } => *span,
        }
    }
}

/// `let x = (q.lower + q.raise) / sqrt(2)`: a named value.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct LetDecl {
    /// The bound name.
    pub name: Ident,
    /// Its value.
    pub value: Expr,
    /// The whole statement.
    pub span: Span,
}

/// `H0 = ...`, `V = ...`, `V3 = ...`: a term of the Hamiltonian (the name is checked by `lower`).
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct TermDef {
    /// The term's name as written.
    pub name: Ident,
    /// The operator.
    pub value: Expr,
    /// The whole statement.
    pub span: Span,
}

/// `focus 0`, `focus 0, delta` or `focus |e, 1>, |g, 2>`: H0 levels forming one model space.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct FocusDecl {
    /// The levels, each named by its energy or by one of its states.
    pub items: Vec<FocusItem>,
    /// `as spins`, `as qubits`: the operators to write the effective Hamiltonian in.
    pub target: Option<Ident>,
    /// The whole statement.
    pub span: Span,
}

/// One level named on a `focus` line.
#[derive(Clone, Debug, PartialEq, Eq)]
pub enum FocusItem {
    /// `delta`: the level with this H0 energy.
    Energy(Expr),
    /// `|e, 1>`: the level holding this product state.
    State(StateKet),
}

impl FocusItem {
    /// Where the item is written.
    pub fn span(&self) -> Span {
        match self {
            FocusItem::Energy(expr) => expr.span,
            FocusItem::State(ket) => ket.span,
        }
    }
}

/// `|e, 1>`: one product state, a label field per factor (a rotor takes two, a fermion space one
/// per site).
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct StateKet {
    /// The fields as written, with where each is.
    pub fields: Vec<(String, Span)>,
    /// The whole ket.
    pub span: Span,
}

/// `quantity chi = (E|1, 1> - E|1, 0> - E|0, 1> + E|0, 0>) / 2`: a named linear combination of
/// branch energies.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct QuantityDecl {
    /// The quantity's name.
    pub name: Ident,
    /// Its value, made of `E|...>` terms.
    pub value: Expr,
    /// The whole statement.
    pub span: Span,
}

/// `sector N = 3, Sz = 1/2`: conserved quantities and the values kept.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct SectorDecl {
    /// The conditions.
    pub items: Vec<SectorItem>,
    /// The whole statement.
    pub span: Span,
}

/// `N = 3` on a `sector` line: a diagonal operator and its value.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct SectorItem {
    /// The operator, which must be diagonal in the product basis.
    pub operator: Expr,
    /// The value kept, a rational number.
    pub value: Expr,
    /// `N = 3`.
    pub span: Span,
}

/// `order 4`: the default order of the expansion.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct OrderDecl {
    /// The order, an expression that must be a non-negative integer.
    pub order: Expr,
    /// The whole statement.
    pub span: Span,
}

/// An expression, scalar or operator.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Expr {
    /// What it is.
    pub kind: ExprKind,
    /// Where it is written (parentheses included when it was parenthesized).
    pub span: Span,
}

/// The kinds of expression.
#[derive(Clone, Debug, PartialEq, Eq)]
pub enum ExprKind {
    /// `42`, `0.125`, `1e-3`: the digits as written.
    Number(String),
    /// `g`, `x`, `i`: a name to resolve.
    Name(String),
    /// `q.lower`, `s.z`, `s[2].z`, `c[i, up].create`: a member of a space or mode.
    Member {
        /// `q`.
        space: Ident,
        /// `[i, up]`: the family member or fermionic mode, if indexed.
        index: Option<Vec<Expr>>,
        /// `lower`.
        member: Ident,
    },
    /// `E|1, 0>`: the energy series of the branch that comes from this state.
    BranchEnergy(StateKet),
    /// `sum(i in 1..N, s in [up, dn]: expr)`.
    Sum {
        /// The index variables, outermost first.
        binders: Vec<Binder>,
        /// The summand.
        body: Box<Expr>,
    },
    /// `|L><R|`: the operator taking state `R` to state `L`.
    KetBra {
        /// The ket `L`.
        ket: Label,
        /// The bra `R`.
        bra: Label,
    },
    /// `sqrt(2)`, `adj(A)`, `comm(A, B)`: a built-in function.
    Call {
        /// The function's name.
        function: Ident,
        /// The arguments.
        args: Vec<Expr>,
    },
    /// `matrix(d, [[0, 1], [1, 0]])`: an operator on factor `d` in its basis order.
    Matrix {
        /// The factor.
        space: Ident,
        /// The rows.
        rows: Vec<MatrixRow>,
    },
    /// `-x`.
    Neg(Box<Expr>),
    /// `a + b`, `a - b`, `a * b`, `a / b`, `a ^ b`.
    Binary {
        /// The operator.
        op: BinaryOp,
        /// The left operand.
        lhs: Box<Expr>,
        /// The right operand.
        rhs: Box<Expr>,
    },
}

/// A binary operator.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum BinaryOp {
    /// `+`
    Add,
    /// `-`
    Sub,
    /// `*`
    Mul,
    /// `/`
    Div,
    /// `%`: the remainder of whole numbers, never negative (for periodic indices).
    Rem,
    /// `^`
    Pow,
}

impl BinaryOp {
    /// The operator as written.
    pub fn symbol(self) -> &'static str {
        match self {
            BinaryOp::Add => "+",
            BinaryOp::Sub => "-",
            BinaryOp::Mul => "*",
            BinaryOp::Div => "/",
            BinaryOp::Rem => "%",
            BinaryOp::Pow => "^",
        }
    }
}

/// `[0, 1, sqrt(2)]`: one row of a matrix literal.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct MatrixRow {
    /// The entries.
    pub entries: Vec<Expr>,
    /// The bracketed row.
    pub span: Span,
}

/// A state label in a ket or bra: `L`, `d.L`, `+1/2`, `s.-1/2`, `0`.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Label {
    /// The space it is qualified with (`d` in `d.L`), if any.
    pub space: Option<Ident>,
    /// The family index of the qualifying space (`[2]` in `q[2].e`), if any.
    pub space_index: Option<Vec<Expr>>,
    /// The label within its space.
    pub local: LocalLabel,
    /// The whole label.
    pub span: Span,
}

/// A label within one space.
#[derive(Clone, Debug, PartialEq, Eq)]
pub enum LocalLabel {
    /// `L`: a named level.
    Name(String),
    /// `+1/2`, `-1`, `0`, `3`: a spin `m` or an oscillator `n`, as written.
    Number(String),
}
