//! The errors of lowering, without spans; the caller that holds the span attaches it.

use std::fmt;

use crate::model::MAX_DIMENSION;

/// Why a syntactically valid model does not describe a perturbation problem.
#[derive(Clone, Debug, PartialEq, Eq)]
#[non_exhaustive]
pub enum LowerError {
    /// A name that nothing declares.
    UnknownName {
        /// The name.
        name: String,
    },
    /// A name declared a second time.
    DeclaredTwice {
        /// The name.
        name: String,
    },
    /// A name the language keeps for itself (`i`, the built-in functions).
    Reserved {
        /// The name.
        name: String,
    },
    /// A space name used where a value is needed.
    SpaceAsValue {
        /// The space's name.
        name: String,
    },
    /// A member access or matrix on something that is not a space.
    NotASpace {
        /// The name.
        name: String,
    },
    /// `s.w`: a member the space does not have.
    UnknownMember {
        /// The space's name.
        space: String,
        /// The member as written.
        member: String,
    },
    /// A call of a function the language does not have.
    UnknownFunction {
        /// The name.
        name: String,
    },
    /// A built-in function called with the wrong number of arguments.
    WrongArity {
        /// The function.
        function: &'static str,
        /// How many it takes.
        expected: usize,
        /// How many were given.
        found: usize,
    },
    /// `spin(j)` with `j` not a positive multiple of 1/2.
    BadSpin,
    /// `oscillator(n)` with `n` not a positive integer.
    BadOscillator,
    /// A level name given twice in one `levels(...)`.
    DuplicateLevel {
        /// The label.
        label: String,
    },
    /// The product of the spaces has more than [`MAX_DIMENSION`] states.
    TooManyStates,
    /// A number literal too large to keep exactly.
    NumberTooLarge,
    /// A scalar where an operator was needed, or the other way round.
    Expected {
        /// What was needed here, e.g. "the focus energy must be a scalar".
        what: &'static str,
    },
    /// `sqrt` of something other than a rational number.
    SqrtNotRational,
    /// `sqrt` of a negative number.
    NegativeSqrt,
    /// Division by a scalar that is zero.
    DivisionByZero,
    /// Division by an operator.
    DivisionByOperator,
    /// An exponent that is not an integer constant.
    BadExponent,
    /// A negative or fractional power of an operator.
    BadOperatorPower,
    /// An exponent beyond [`MAX_EXPONENT`].
    ExponentTooLarge,
    /// A matrix row with the wrong number of entries.
    RaggedMatrix {
        /// 1-based row number.
        row: usize,
        /// The number of states of the space.
        expected: usize,
        /// The entries found.
        found: usize,
    },
    /// A matrix with the wrong number of rows.
    MatrixRows {
        /// The space.
        space: String,
        /// Its number of states.
        expected: usize,
        /// The rows found.
        found: usize,
    },
    /// A ket or bra label that names no state.
    UnknownLabel {
        /// The label as written.
        label: String,
    },
    /// A label that names states of several spaces.
    AmbiguousLabel {
        /// The label as written.
        label: String,
        /// The spaces it could belong to.
        spaces: Vec<String>,
    },
    /// A ket and a bra on different spaces.
    LabelsOnDifferentSpaces,
    /// An assignment to something that is not `H0`, `V` or `Vk`.
    UnknownTerm {
        /// The name assigned to.
        name: String,
    },
    /// No `H0 = ...`.
    MissingH0,
    /// No `V = ...`.
    MissingV,
    /// `order` that is not a non-negative integer.
    BadOrder,
    /// A value whose coefficients or terms outgrow [`crate::exact::MAX_VALUE_BITS`] or
    /// [`crate::exact::MAX_VALUE_TERMS`], e.g. `(7^1000)^1000`.
    ValueTooLarge {
        /// The size reached (or bounded before computing).
        size: crate::exact::ValueSize,
    },
    /// `order` beyond [`crate::model::MAX_ORDER`].
    OrderTooLarge,
    /// A term that is not Hermitian; the message names the first offending pair of states.
    NotHermitian {
        /// The term's name, `H0` or `V2`.
        term: String,
        /// The bra-ket of the offending entry, e.g. `<0|V|1>`.
        entry: String,
        /// Its value.
        value: String,
        /// The mirrored bra-ket, e.g. `<1|V|0>`.
        mirror: String,
        /// The conjugate of the mirrored entry.
        mirror_conj: String,
    },
    /// A `param` declared `> 0` given a value that is not positive.
    NotPositive {
        /// The parameter.
        name: String,
    },
    /// `rotor(J)` with `J` not a non-negative integer.
    BadRotor,
    /// `ladder(n)` with `n` not a positive integer.
    BadLadder,
    /// `fermions(...)` with no mode, or more than a 64-bit occupation holds.
    BadFermions,
    /// An index on a space that is neither a family nor a fermion space.
    NotIndexed {
        /// The space.
        name: String,
    },
    /// A family or fermion space used without an index.
    IndexNeeded {
        /// The family or space.
        name: String,
    },
    /// An index with the wrong number of values.
    WrongIndexCount {
        /// How many the family or space takes.
        expected: usize,
        /// How many were written.
        found: usize,
    },
    /// An index value outside its set.
    IndexOutOfRange {
        /// The value as evaluated.
        value: String,
        /// The set it must lie in.
        set: String,
    },
    /// An index or range bound that is neither a whole number nor a name.
    BadIndex,
    /// A range whose end lies more than one below its start.
    BadRange {
        /// The range as evaluated.
        range: String,
    },
    /// A `sum` with no term at all.
    EmptySum,
    /// An index variable named like a declared name.
    IndexHidesName {
        /// The name.
        name: String,
    },
    /// `%` of values that are not whole numbers, or by zero.
    BadRemainder,
    /// A fermion operator asked of a space that holds no fermions.
    NotFermionic {
        /// The space.
        name: String,
    },
    /// A ket-bra or `matrix` on a space that has no single-field labels (fermions, rotors).
    NoKetBras {
        /// The space.
        name: String,
    },
    /// A sector operator that is not diagonal in the product basis.
    SectorNotDiagonal {
        /// A product state.
        from: String,
        /// Another product state the operator takes it to.
        to: String,
    },
    /// A sector value or eigenvalue that is not a rational number.
    SectorNotRational,
    /// No product state has the sector's values.
    EmptySector {
        /// The values the operator does take, as text.
        values: Vec<String>,
    },
    /// A term that takes a state of the sector out of it.
    SectorBroken {
        /// `H0` or `V2`.
        term: String,
        /// The sector state.
        from: String,
        /// The state outside the sector it reaches.
        to: String,
    },
    /// A sector of a product space too large to search.
    ProductTooLarge,
    /// A state in `focus` that the spaces do not have.
    UnknownState {
        /// The ket as written.
        ket: String,
        /// Why: which field is wrong, or how many fields are needed.
        why: String,
    },
    /// A state in `focus` that the sector leaves out.
    StateOutsideSector {
        /// The ket.
        ket: String,
    },
    /// A state in `focus` that is not an eigenstate of H0.
    NotAnEigenstate {
        /// The ket.
        ket: String,
    },
    /// An operator whose matrix would take too much work to form.
    OperatorTooComplex,
    /// Bad arguments of a coupling coefficient.
    Coupling {
        /// What is wrong.
        why: String,
    },
    /// A `focus` line that names the same levels as an earlier one.
    FocusRepeated,
}

/// The largest exponent `^` accepts; larger powers are surely typing mistakes and would only
/// make huge numbers.
pub const MAX_EXPONENT: i64 = 1000;

impl fmt::Display for LowerError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            LowerError::UnknownName { name } => write!(f, "unknown name `{name}`"),
            LowerError::DeclaredTwice { name } => write!(f, "`{name}` is declared twice"),
            LowerError::Reserved { name } => write!(f, "`{name}` is a reserved name"),
            LowerError::SpaceAsValue { name } => {
                write!(f, "`{name}` is a space, not a value")
            }
            LowerError::NotASpace { name } => write!(f, "`{name}` is not a space"),
            LowerError::UnknownMember { space, member } => {
                write!(f, "space `{space}` has no operator `{member}`")
            }
            LowerError::UnknownFunction { name } => write!(f, "unknown function `{name}`"),
            LowerError::WrongArity { function, expected, found } => {
                let plural = if *expected == 1 { "" } else { "s" };
                write!(f, "`{function}` takes {expected} argument{plural}, found {found}")
            }
            LowerError::BadSpin => write!(f, "spin must be a positive multiple of 1/2"),
            LowerError::BadOscillator => {
                write!(f, "an oscillator needs a positive whole number of states")
            }
            LowerError::DuplicateLevel { label } => {
                write!(f, "level `{label}` is listed twice")
            }
            LowerError::TooManyStates => {
                write!(f, "the product space has more than {MAX_DIMENSION} states")
            }
            LowerError::NumberTooLarge => write!(
                f,
                "number too large (at most 1000 characters and a decimal exponent of at most 1000)"
            ),
            LowerError::Expected { what } => write!(f, "{what}"),
            LowerError::SqrtNotRational => write!(f, "`sqrt` needs a rational number"),
            LowerError::NegativeSqrt => write!(f, "square root of a negative number"),
            LowerError::DivisionByZero => write!(f, "division by zero"),
            LowerError::DivisionByOperator => write!(f, "cannot divide by an operator"),
            LowerError::BadExponent => write!(f, "the exponent must be an integer"),
            LowerError::BadOperatorPower => {
                write!(f, "an operator power must be a non-negative integer")
            }
            LowerError::ExponentTooLarge => {
                write!(f, "exponent larger than {MAX_EXPONENT}")
            }
            LowerError::RaggedMatrix { row, expected, found } => {
                let plural = if *found == 1 { "y" } else { "ies" };
                write!(f, "matrix row {row} has {found} entr{plural}, expected {expected}")
            }
            LowerError::MatrixRows { space, expected, found } => {
                write!(f, "the matrix has {found} rows, but `{space}` has {expected} states")
            }
            LowerError::UnknownLabel { label } => write!(f, "no space has a state `{label}`"),
            LowerError::AmbiguousLabel { label, spaces } => {
                let spaces: Vec<String> = spaces.iter().map(|s| format!("`{s}`")).collect();
                write!(f, "state label `{label}` is ambiguous: {}", spaces.join(" and "))
            }
            LowerError::LabelsOnDifferentSpaces => {
                write!(f, "the ket and the bra are states of different spaces")
            }
            LowerError::UnknownTerm { name } => {
                write!(f, "`{name}` is not a Hamiltonian term (H0, V, V2, V3, ...)")
            }
            LowerError::MissingH0 => write!(f, "the model has no H0"),
            LowerError::MissingV => write!(f, "the model has no perturbation V"),
            LowerError::BadOrder => write!(f, "the order must be a non-negative integer"),
            LowerError::ValueTooLarge { size } => write!(
                f,
                "this value is too large ({} bits in a coefficient, {} terms; cleave allows {} \
                 bits and {} terms): use smaller numbers or powers, or fewer parameters in one \
                 factor",
                size.bits,
                size.terms,
                crate::exact::MAX_VALUE_BITS,
                crate::exact::MAX_VALUE_TERMS
            ),
            LowerError::OrderTooLarge => {
                write!(f, "the order must be at most {}", crate::model::MAX_ORDER)
            }
            LowerError::NotHermitian { term, entry, value, mirror, mirror_conj } => write!(
                f,
                "{term} is not Hermitian: {entry} = {value} but conj({mirror}) = {mirror_conj}"
            ),
            LowerError::NotPositive { name } => {
                write!(f, "`{name}` is declared positive (`> 0`)")
            }
            LowerError::BadRotor => {
                write!(f, "a rotor needs its highest J as a non-negative whole number")
            }
            LowerError::BadLadder => write!(f, "a ladder needs a positive whole number of states"),
            LowerError::BadFermions => write!(
                f,
                "a fermion space needs between 1 and {} modes",
                crate::model::space::MAX_MODES
            ),
            LowerError::NotIndexed { name } => {
                write!(f, "`{name}` is neither a family of spaces nor a fermion space")
            }
            LowerError::IndexNeeded { name } => write!(f, "`{name}` needs an index"),
            LowerError::WrongIndexCount { expected, found } => {
                write!(f, "the index has {found} values, expected {expected}")
            }
            LowerError::IndexOutOfRange { value, set } => {
                write!(f, "index {value} is not in {set}")
            }
            LowerError::BadIndex => write!(f, "an index must be a whole number or a name"),
            LowerError::BadRange { range } => write!(f, "the range {range} runs backwards"),
            LowerError::EmptySum => write!(f, "the sum has no terms"),
            LowerError::IndexHidesName { name } => {
                write!(f, "index `{name}` hides a declared name")
            }
            LowerError::BadRemainder => {
                write!(f, "`%` needs whole numbers and a non-zero divisor")
            }
            LowerError::NotFermionic { name } => write!(f, "`{name}` is not a fermion space"),
            LowerError::NoKetBras { name } => {
                write!(f, "the states of `{name}` cannot be used in ket-bras or `matrix`")
            }
            LowerError::SectorNotDiagonal { from, to } => write!(
                f,
                "a sector needs an operator diagonal in the product states, but this one takes \
                 {from} to {to}"
            ),
            LowerError::SectorNotRational => {
                write!(f, "a sector value must be a rational number")
            }
            LowerError::EmptySector { values } => write!(
                f,
                "no state has this value; the operator takes the values {}",
                values.join(", ")
            ),
            LowerError::SectorBroken { term, from, to } => write!(
                f,
                "{term} does not conserve the sector: it takes {from} to {to}, which the sector \
                 leaves out"
            ),
            LowerError::ProductTooLarge => write!(
                f,
                "the product space is too large to search for a sector (more than {} states)",
                super::MAX_SECTOR_SEARCH
            ),
            LowerError::UnknownState { ket, why } => write!(f, "no state {ket}: {why}"),
            LowerError::StateOutsideSector { ket } => {
                write!(f, "the state {ket} is not in the sector")
            }
            LowerError::NotAnEigenstate { ket } => {
                write!(f, "the state {ket} is not an eigenstate of H0")
            }
            LowerError::OperatorTooComplex => write!(
                f,
                "this operator takes more than {} steps per state to apply",
                super::MAX_OPERATOR_COST
            ),
            LowerError::Coupling { why } => write!(f, "{why}"),
            LowerError::FocusRepeated => write!(f, "this focus names the same levels again"),
        }
    }
}
