//! Exact evaluation of expressions to scalars ([`RatFunc`]) and operators on the product space.

use std::collections::BTreeMap;

use num_bigint::BigInt;

use super::{LowerError, MAX_EXPONENT};
use crate::diagnostics::{At, Diagnostic, Span};
use crate::exact::{Field, ParamId, Radical, RatFunc, Rational};
use crate::model::{self, Basis, Space, SpaceKind, SpinOp};
use crate::syntax::ast;

/// A value: a scalar or an operator on the whole product space.
#[derive(Clone, Debug)]
pub(super) enum Value {
    Scalar(RatFunc),
    Operator(model::Operator),
}

/// What a name stands for.
#[derive(Clone, Debug)]
pub(super) enum Binding {
    Param(ParamId),
    Space(usize),
    Value(Value),
}

/// The names in scope and the product basis operators live on.
pub(super) struct Scope {
    names: BTreeMap<String, Binding>,
    basis: Basis,
}

impl Scope {
    /// A scope knowing the parameters (`params[k]` is `ParamId(k)`) and nothing else.
    pub(super) fn new(basis: Basis, params: &[String]) -> Scope {
        let mut names = BTreeMap::new();
        for (k, name) in params.iter().enumerate() {
            let id = ParamId(u32::try_from(k).unwrap_or(u32::MAX));
            names.insert(name.clone(), Binding::Param(id));
        }
        Scope { names, basis }
    }

    pub(super) fn bind(&mut self, name: &str, binding: Binding) {
        self.names.insert(name.to_string(), binding);
    }

    pub(super) fn basis(&self) -> &Basis {
        &self.basis
    }

    pub(super) fn dimension(&self) -> usize {
        self.basis.dimension()
    }

    /// A scalar as `scalar * identity`; an operator as itself.
    pub(super) fn to_operator(&self, value: Value) -> model::Operator {
        match value {
            Value::Scalar(scalar) => model::scalar_operator(self.dimension(), scalar),
            Value::Operator(operator) => operator,
        }
    }

    /// The rational number a value is, if it is one (a scalar free of parameters and radicals).
    pub(super) fn as_rational(&self, value: &Value) -> Option<Rational> {
        match value {
            Value::Scalar(scalar) => scalar.as_constant().and_then(|c| c.as_rational()),
            Value::Operator(_) => None,
        }
    }

    /// Evaluates an expression. Recursion depth is bounded by the syntax limits on nesting and
    /// on operators per line.
    pub(super) fn eval(&self, expr: &ast::Expr) -> Result<Value, Diagnostic> {
        match &expr.kind {
            ast::ExprKind::Number(text) => {
                let value = parse_number(text).at(expr.span)?;
                Ok(Value::Scalar(RatFunc::from_rational(&value)))
            }
            ast::ExprKind::Name(name) => self.eval_name(name, expr.span),
            ast::ExprKind::Member { space, member } => self.eval_member(space, member),
            ast::ExprKind::KetBra { ket, bra } => self.eval_ket_bra(ket, bra),
            ast::ExprKind::Call { function, args } => self.eval_call(function, args, expr.span),
            ast::ExprKind::Matrix { space, rows } => self.eval_matrix(space, rows, expr.span),
            ast::ExprKind::Neg(operand) => Ok(match self.eval(operand)? {
                Value::Scalar(s) => Value::Scalar(-s),
                Value::Operator(o) => Value::Operator(o.scale(&-RatFunc::one())),
            }),
            ast::ExprKind::Binary { op, lhs, rhs } => self.eval_binary(*op, lhs, rhs),
        }
    }

    fn eval_name(&self, name: &str, span: Span) -> Result<Value, Diagnostic> {
        match self.names.get(name) {
            Some(Binding::Param(id)) => Ok(Value::Scalar(RatFunc::param(*id))),
            Some(Binding::Value(value)) => Ok(value.clone()),
            Some(Binding::Space(idx)) => {
                let hint = match &self.basis.spaces()[*idx].kind {
                    SpaceKind::Oscillator { .. } => {
                        format!("use `{name}.lower`, `{name}.raise` or `{name}.n`")
                    }
                    SpaceKind::Spin { .. } => format!("use `{name}.x`, `{name}.y` or `{name}.z`"),
                    SpaceKind::Levels { .. } => "use ket-bras of its states, like `|A><B|`".into(),
                };
                Err(LowerError::SpaceAsValue { name: name.to_string() })
                    .at(span)
                    .map_err(|d| d.with_hint(hint))
            }
            None if name == "i" => Ok(Value::Scalar(RatFunc::constant(Radical::i()))),
            None => {
                let err = Err(LowerError::UnknownName { name: name.to_string() }).at(span);
                match self.suggest(name) {
                    Some(close) => err.map_err(|d| d.with_hint(format!("did you mean `{close}`?"))),
                    None => err,
                }
            }
        }
    }

    /// The declared name closest to `name`, if it is within two edits.
    fn suggest(&self, name: &str) -> Option<&str> {
        self.names
            .keys()
            .map(|known| (edit_distance(name, known), known.as_str()))
            .filter(|(distance, _)| *distance <= 2 && *distance < name.chars().count())
            .min()
            .map(|(_, known)| known)
    }

    fn space(&self, ident: &ast::Ident) -> Result<(usize, &Space), Diagnostic> {
        match self.names.get(&ident.name) {
            Some(Binding::Space(idx)) => Ok((*idx, &self.basis.spaces()[*idx])),
            Some(_) => Err(LowerError::NotASpace { name: ident.name.clone() }).at(ident.span),
            None => Err(LowerError::UnknownName { name: ident.name.clone() }).at(ident.span),
        }
    }

    fn eval_member(&self, space: &ast::Ident, member: &ast::Ident) -> Result<Value, Diagnostic> {
        let (space_idx, factor) = self.space(space)?;
        let local = match (&factor.kind, member.name.as_str()) {
            (SpaceKind::Oscillator { n_states }, "lower") => Some(Space::lower(*n_states)),
            (SpaceKind::Oscillator { n_states }, "raise") => Some(Space::raise(*n_states)),
            (SpaceKind::Oscillator { n_states }, "n") => Some(Space::number(*n_states)),
            (SpaceKind::Spin { twice_j }, name) => {
                let op = match name {
                    "x" => Some(SpinOp::X),
                    "y" => Some(SpinOp::Y),
                    "z" => Some(SpinOp::Z),
                    "up" => Some(SpinOp::Up),
                    "down" => Some(SpinOp::Down),
                    _ => None,
                };
                op.map(|op| Space::spin(*twice_j, op))
            }
            _ => None,
        };
        match local {
            Some(local) => Ok(Value::Operator(self.basis.embed(space_idx, &local))),
            None => {
                let hint = match &factor.kind {
                    SpaceKind::Oscillator { .. } => "an oscillator has `lower`, `raise` and `n`",
                    SpaceKind::Spin { .. } => "a spin has `x`, `y`, `z`, `up` and `down`",
                    SpaceKind::Levels { .. } => {
                        "a levels space has no named operators; write ket-bras like `|A><B|`"
                    }
                };
                Err(LowerError::UnknownMember {
                    space: space.name.clone(),
                    member: member.name.clone(),
                })
                .at(member.span)
                .map_err(|d| d.with_hint(hint))
            }
        }
    }

    fn eval_call(
        &self,
        function: &ast::Ident,
        args: &[ast::Expr],
        span: Span,
    ) -> Result<Value, Diagnostic> {
        let (name, arity): (&'static str, usize) = match function.name.as_str() {
            "sqrt" => ("sqrt", 1),
            "adj" => ("adj", 1),
            "comm" => ("comm", 2),
            "root_between" => ("root_between", 3),
            // The spelling of earlier releases, read for one more release.
            "root" => ("root", 2),
            _ => {
                return Err(LowerError::UnknownFunction { name: function.name.clone() })
                    .at(function.span)
                    .map_err(|d| {
                        d.with_hint(
                            "the functions are `sqrt`, `root_between`, `adj`, `comm` and `matrix`",
                        )
                    })
            }
        };
        if args.len() != arity {
            return Err(LowerError::WrongArity {
                function: name,
                expected: arity,
                found: args.len(),
            })
            .at(span);
        }
        match name {
            "sqrt" => {
                let value = self.eval(&args[0])?;
                let radicand =
                    self.as_rational(&value).ok_or(LowerError::SqrtNotRational).at(args[0].span)?;
                if radicand.is_negative() {
                    return Err(LowerError::NegativeSqrt)
                        .at(args[0].span)
                        .map_err(|d| d.with_hint("write `i*sqrt(r)` for an imaginary root"));
                }
                Ok(Value::Scalar(RatFunc::constant(Radical::sqrt_of(&radicand))))
            }
            "root_between" | "root" => self.eval_root(name, args),
            "adj" => Ok(match self.eval(&args[0])? {
                Value::Scalar(s) => Value::Scalar(s.conj()),
                Value::Operator(o) => Value::Operator(o.adjoint()),
            }),
            _ => {
                let a = self.eval(&args[0])?;
                let b = self.eval(&args[1])?;
                let (a, b) = (self.to_operator(a), self.to_operator(b));
                Ok(Value::Operator(a.mul(&b).sub(&b.mul(&a))))
            }
        }
    }

    /// `root_between(P, lo, hi)`: the only real root of the polynomial `P` in `x` strictly
    /// between `lo` and `hi`; `root(P, k)`, deprecated, the `k`-th real root ascending. A model
    /// holds it exactly when square roots write it.
    fn eval_root(&self, name: &str, args: &[ast::Expr]) -> Result<Value, Diagnostic> {
        use crate::exact::roots::{self, RootBetween};
        let poly = poly_in_x(&args[0])?;
        let rational = |expr: &ast::Expr| -> Result<Rational, Diagnostic> {
            let value = self.eval(expr)?;
            self.as_rational(&value)
                .ok_or(LowerError::Expected { what: "a rational number" })
                .at(expr.span)
        };
        let (lo, hi) = if name == "root" {
            let k = rational(&args[1])?;
            let k = k
                .to_i64()
                .filter(|k| *k >= 1)
                .ok_or(LowerError::Expected { what: "the number of a real root, counting from 1" });
            let k = k.at(args[1].span)?;
            roots::kth_root_bounds(&poly, k as usize)
                .ok_or(LowerError::Expected { what: "the polynomial has fewer real roots" })
                .at(args[1].span)
                .map_err(|d| {
                    d.with_hint("`root(P, k)` is deprecated: write root_between(P, lo, hi)")
                })?
        } else {
            (rational(&args[1])?, rational(&args[2])?)
        };
        let span = args[0].span.to(args[args.len() - 1].span);
        match roots::root_between(&poly, &lo, &hi) {
            RootBetween::Exact(value) => Ok(Value::Scalar(RatFunc::constant(value))),
            RootBetween::Count(_) => Err(LowerError::Expected {
                what: "the polynomial must have exactly one real root between the bounds",
            })
            .at(span),
            RootBetween::Degree(_) => Err(LowerError::Expected {
                what: "this root is an algebraic number of degree 3 or more, which a model \
                       cannot hold yet (derivations produce such numbers themselves)",
            })
            .at(span),
        }
    }

    fn eval_matrix(
        &self,
        space: &ast::Ident,
        rows: &[ast::MatrixRow],
        span: Span,
    ) -> Result<Value, Diagnostic> {
        let (space_idx, factor) = self.space(space)?;
        let n = factor.dimension();
        if rows.len() != n {
            return Err(LowerError::MatrixRows {
                space: space.name.clone(),
                expected: n,
                found: rows.len(),
            })
            .at(span);
        }
        let mut triplets = Vec::new();
        for (row_idx, row) in rows.iter().enumerate() {
            if row.entries.len() != n {
                return Err(LowerError::RaggedMatrix {
                    row: row_idx + 1,
                    expected: n,
                    found: row.entries.len(),
                })
                .at(row.span);
            }
            for (col_idx, entry) in row.entries.iter().enumerate() {
                match self.eval(entry)? {
                    Value::Scalar(value) => triplets.push((row_idx, col_idx, value)),
                    Value::Operator(_) => {
                        return Err(LowerError::Expected {
                            what: "a matrix entry must be a scalar, not an operator",
                        })
                        .at(entry.span)
                    }
                }
            }
        }
        let local = model::Operator::from_triplets(n, n, triplets);
        Ok(Value::Operator(self.basis.embed(space_idx, &local)))
    }

    fn eval_binary(
        &self,
        op: ast::BinaryOp,
        lhs: &ast::Expr,
        rhs: &ast::Expr,
    ) -> Result<Value, Diagnostic> {
        let left = self.eval(lhs)?;
        if op == ast::BinaryOp::Pow {
            return self.eval_power(left, rhs, lhs.span.to(rhs.span));
        }
        let right = self.eval(rhs)?;
        let minus_one = -RatFunc::one();
        Ok(match (op, left, right) {
            (ast::BinaryOp::Add, Value::Scalar(a), Value::Scalar(b)) => Value::Scalar(a + b),
            (ast::BinaryOp::Sub, Value::Scalar(a), Value::Scalar(b)) => Value::Scalar(a - b),
            (ast::BinaryOp::Mul, Value::Scalar(a), Value::Scalar(b)) => Value::Scalar(a * b),
            (ast::BinaryOp::Add, Value::Operator(a), Value::Operator(b)) => {
                Value::Operator(a.add(&b))
            }
            (ast::BinaryOp::Sub, Value::Operator(a), Value::Operator(b)) => {
                Value::Operator(a.sub(&b))
            }
            (ast::BinaryOp::Mul, Value::Operator(a), Value::Operator(b)) => {
                Value::Operator(a.mul(&b))
            }
            // A scalar next to an operator in a sum is that scalar times the identity.
            (ast::BinaryOp::Add, Value::Scalar(s), Value::Operator(o))
            | (ast::BinaryOp::Add, Value::Operator(o), Value::Scalar(s)) => {
                Value::Operator(o.add_identity(&s))
            }
            (ast::BinaryOp::Sub, Value::Operator(o), Value::Scalar(s)) => {
                Value::Operator(o.add_identity(&-s))
            }
            (ast::BinaryOp::Sub, Value::Scalar(s), Value::Operator(o)) => {
                Value::Operator(o.scale(&minus_one).add_identity(&s))
            }
            (ast::BinaryOp::Mul, Value::Scalar(s), Value::Operator(o))
            | (ast::BinaryOp::Mul, Value::Operator(o), Value::Scalar(s)) => {
                Value::Operator(o.scale(&s))
            }
            (ast::BinaryOp::Div, _, Value::Operator(_)) => {
                return Err(LowerError::DivisionByOperator).at(rhs.span);
            }
            (ast::BinaryOp::Div, left, Value::Scalar(divisor)) => {
                let inverse = divisor.inv().ok_or(LowerError::DivisionByZero).at(rhs.span)?;
                match left {
                    Value::Scalar(s) => Value::Scalar(s * inverse),
                    Value::Operator(o) => Value::Operator(o.scale(&inverse)),
                }
            }
            (ast::BinaryOp::Pow, ..) => unreachable!("powers are handled above"),
        })
    }

    /// `base ^ exponent`: any integer power of a scalar (negative powers invert), a
    /// non-negative integer power of an operator.
    fn eval_power(
        &self,
        base: Value,
        exponent: &ast::Expr,
        span: Span,
    ) -> Result<Value, Diagnostic> {
        let exponent_value = self.eval(exponent)?;
        if let Value::Operator(_) = exponent_value {
            return Err(LowerError::Expected {
                what: "the exponent must be a scalar, not an operator",
            })
            .at(exponent.span);
        }
        let rational = self.as_rational(&exponent_value);
        let n = match (&base, rational) {
            (Value::Operator(_), Some(r)) if !r.is_integer() || r.is_negative() => {
                return Err(LowerError::BadOperatorPower).at(exponent.span);
            }
            (_, Some(r)) if r.is_integer() => r,
            _ => return Err(LowerError::BadExponent).at(exponent.span),
        };
        let n = n
            .to_i64()
            .filter(|n| n.abs() <= MAX_EXPONENT)
            .ok_or(LowerError::ExponentTooLarge)
            .at(exponent.span)?;
        match base {
            Value::Scalar(s) => {
                let exponent = i32::try_from(n).expect("bounded by MAX_EXPONENT");
                let power = s.pow(exponent).ok_or(LowerError::DivisionByZero).at(span)?;
                Ok(Value::Scalar(power))
            }
            Value::Operator(o) => Ok(Value::Operator(operator_power(&o, n as u64))),
        }
    }

    /// Which spaces have a state with this label.
    fn candidates(&self, label: &ast::LocalLabel) -> Vec<usize> {
        (0..self.basis.spaces().len())
            .filter(|idx| local_state(&self.basis.spaces()[*idx], label).is_some())
            .collect()
    }

    /// Resolves `|ket><bra|` to a factor and two of its states; a qualified label on either side
    /// fixes the factor for both.
    fn eval_ket_bra(&self, ket: &ast::Label, bra: &ast::Label) -> Result<Value, Diagnostic> {
        let qualified = [ket, bra].into_iter().find_map(|label| label.space.as_ref());
        let space_idx = match qualified {
            Some(ident) => {
                let (idx, _) = self.space(ident)?;
                for label in [ket, bra] {
                    if let Some(other) = &label.space {
                        let (other_idx, _) = self.space(other)?;
                        if other_idx != idx {
                            return Err(LowerError::LabelsOnDifferentSpaces).at(label.span);
                        }
                    }
                }
                idx
            }
            None => {
                let ket_spaces = self.candidates(&ket.local);
                let bra_spaces = self.candidates(&bra.local);
                for (label, spaces) in [(ket, &ket_spaces), (bra, &bra_spaces)] {
                    if spaces.is_empty() {
                        return Err(LowerError::UnknownLabel { label: label_text(&label.local) })
                            .at(label.span);
                    }
                }
                let common: Vec<usize> =
                    ket_spaces.iter().copied().filter(|idx| bra_spaces.contains(idx)).collect();
                match common.as_slice() {
                    [] => {
                        return Err(LowerError::LabelsOnDifferentSpaces).at(ket.span.to(bra.span))
                    }
                    [one] => *one,
                    several => {
                        let spaces: Vec<String> = several
                            .iter()
                            .map(|idx| self.basis.spaces()[*idx].name.clone())
                            .collect();
                        let example = format!("|{}.{}>", spaces[0], label_text(&ket.local));
                        return Err(LowerError::AmbiguousLabel {
                            label: label_text(&ket.local),
                            spaces,
                        })
                        .at(ket.span)
                        .map_err(|d| {
                            d.with_hint(format!("qualify it with its space, e.g. `{example}`"))
                        });
                    }
                }
            }
        };
        let factor = &self.basis.spaces()[space_idx];
        let mut states = [0; 2];
        for (slot, label) in states.iter_mut().zip([ket, bra]) {
            *slot = local_state(factor, &label.local)
                .ok_or_else(|| LowerError::UnknownLabel { label: label_text(&label.local) })
                .at(label.span)?;
        }
        let local = Space::ket_bra(factor.dimension(), states[0], states[1]);
        Ok(Value::Operator(self.basis.embed(space_idx, &local)))
    }
}

/// `A^n` by repeated squaring.
fn operator_power(operator: &model::Operator, mut n: u64) -> model::Operator {
    let mut acc = model::Operator::identity(operator.n_rows());
    let mut square = operator.clone();
    while n > 0 {
        if n & 1 == 1 {
            acc = acc.mul(&square);
        }
        n >>= 1;
        if n > 0 {
            square = square.mul(&square);
        }
    }
    acc
}

/// The largest decimal exponent a literal may carry (`1e1000`).
const MAX_DECIMAL_EXPONENT: i64 = 1000;

/// An exact decimal literal: `42`, `0.125` (= 1/8), `1e-3`, `2.5E2`.
pub(super) fn parse_number(text: &str) -> Result<Rational, LowerError> {
    let (mantissa, exponent) = match text.find(['e', 'E']) {
        Some(idx) => {
            let exponent =
                text[idx + 1..].parse::<i64>().map_err(|_| LowerError::NumberTooLarge)?;
            (&text[..idx], exponent)
        }
        None => (text, 0),
    };
    if exponent.abs() > MAX_DECIMAL_EXPONENT {
        return Err(LowerError::NumberTooLarge);
    }
    let (whole, fraction) = mantissa.split_once('.').unwrap_or((mantissa, ""));
    let digits = format!("{whole}{fraction}");
    let value = BigInt::parse_bytes(digits.as_bytes(), 10).ok_or(LowerError::NumberTooLarge)?;
    let scale = exponent - fraction.len() as i64;
    let ten = Rational::from_i64(10);
    let power = ten.pow(i32::try_from(scale).map_err(|_| LowerError::NumberTooLarge)?);
    Ok(Rational::from_bigint(value) * power.expect("10 is not zero"))
}

/// A signed label `+1/2`, `-3`, `0` as a rational number.
fn parse_signed(text: &str) -> Option<Rational> {
    let (negative, unsigned) = match text.as_bytes().first() {
        Some(b'-') => (true, &text[1..]),
        Some(b'+') => (false, &text[1..]),
        _ => (false, text),
    };
    let (numer, denom) = unsigned.split_once('/').unwrap_or((unsigned, "1"));
    let numer = BigInt::parse_bytes(numer.as_bytes(), 10)?;
    let denom = BigInt::parse_bytes(denom.as_bytes(), 10)?;
    let value = Rational::new(numer, denom)?;
    Some(if negative { -value } else { value })
}

/// The index of the state `label` within `space`, if it has one: a level by name, a spin state by
/// its `m`, an oscillator state by its `n`.
fn local_state(space: &Space, label: &ast::LocalLabel) -> Option<usize> {
    match (&space.kind, label) {
        (SpaceKind::Levels { labels }, ast::LocalLabel::Name(name)) => {
            labels.iter().position(|l| l == name)
        }
        (SpaceKind::Spin { twice_j }, ast::LocalLabel::Number(text)) => {
            let twice_m = parse_signed(text)? * Rational::from_i64(2);
            let twice_m = twice_m.to_i64()?;
            let twice_j = i64::from(*twice_j);
            // States run m = j, j-1, ..., -j, so m sits at index j - m.
            if twice_m.abs() > twice_j || (twice_j - twice_m) % 2 != 0 {
                return None;
            }
            usize::try_from((twice_j - twice_m) / 2).ok()
        }
        (SpaceKind::Oscillator { n_states }, ast::LocalLabel::Number(text)) => {
            let n = parse_signed(text)?.to_i64()?;
            usize::try_from(n).ok().filter(|n| n < n_states)
        }
        _ => None,
    }
}

fn label_text(label: &ast::LocalLabel) -> String {
    match label {
        ast::LocalLabel::Name(text) | ast::LocalLabel::Number(text) => text.clone(),
    }
}

/// Levenshtein distance in characters, for "did you mean" hints.
fn edit_distance(a: &str, b: &str) -> usize {
    let b: Vec<char> = b.chars().collect();
    let mut previous: Vec<usize> = (0..=b.len()).collect();
    for (i, ca) in a.chars().enumerate() {
        let mut current = vec![i + 1; b.len() + 1];
        for (j, cb) in b.iter().enumerate() {
            let substitution = previous[j] + usize::from(ca != *cb);
            current[j + 1] = substitution.min(previous[j + 1] + 1).min(current[j] + 1);
        }
        previous = current;
    }
    previous[b.len()]
}

/// The polynomial in `x` with rational coefficients that `expr` writes (`x^3 - x^2 - 2*x + 1`),
/// coefficients from `x^0` up.
fn poly_in_x(expr: &ast::Expr) -> Result<crate::exact::univariate::UniPoly<Rational>, Diagnostic> {
    use crate::exact::univariate::UniPoly;
    let bad = || {
        Err(LowerError::Expected { what: "a polynomial in `x` with rational coefficients" })
            .at(expr.span)
    };
    Ok(match &expr.kind {
        ast::ExprKind::Number(text) => UniPoly::constant(parse_number(text).at(expr.span)?),
        ast::ExprKind::Name(name) if name == "x" => UniPoly::x(),
        ast::ExprKind::Neg(operand) => -poly_in_x(operand)?,
        ast::ExprKind::Binary { op, lhs, rhs } => {
            let left = poly_in_x(lhs)?;
            match op {
                ast::BinaryOp::Add => left + poly_in_x(rhs)?,
                ast::BinaryOp::Sub => left - poly_in_x(rhs)?,
                ast::BinaryOp::Mul => left * poly_in_x(rhs)?,
                ast::BinaryOp::Div => {
                    let divisor = poly_in_x(rhs)?;
                    match divisor.coeffs() {
                        [c] if !c.is_zero() => left.scale(&c.inv().expect("non-zero")),
                        _ => return bad(),
                    }
                }
                ast::BinaryOp::Pow => {
                    let exponent = poly_in_x(rhs)?;
                    let k = match exponent.coeffs() {
                        [c] => c.to_i64().filter(|k| (0..=64).contains(k)),
                        [] => Some(0),
                        _ => None,
                    };
                    let Some(k) = k else { return bad() };
                    (0..k).fold(UniPoly::one(), |acc, _| acc * left.clone())
                }
            }
        }
        _ => return bad(),
    })
}
