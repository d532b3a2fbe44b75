//! Exact evaluation of expressions to scalars ([`RatFunc`]) and operators ([`OperatorExpr`]),
//! with index variables of `sum(...)` in scope.

use std::cell::RefCell;
use std::collections::BTreeMap;

use num_bigint::BigInt;

use super::{LowerError, MAX_EXPONENT, MAX_OPERATOR_COST};
use crate::diagnostics::{At, Diagnostic, Span};
use crate::exact::angular::{clebsch_gordan, wigner_3j};
use crate::exact::{Field, ParamId, Radical, RatFunc, Rational, ValueSize, MAX_PRODUCT_WORK};
use crate::model::space::{IndexSet, IndexValue};
use crate::model::{self, OperatorExpr, Space};
use crate::syntax::ast;

/// A value: a scalar, an operator on the product space, or a named index value.
#[derive(Clone, Debug)]
pub(super) enum Value {
    Scalar(RatFunc),
    Operator(OperatorExpr),
    /// `up` while `s in [up, dn]` runs: usable only as an index.
    Label(String),
    /// A combination of branch energies `Σ w E|state>`, in a `quantity` line: each state as
    /// written with its weight.
    Energies(Vec<(ast::StateKet, RatFunc)>),
}

/// What a name stands for.
#[derive(Clone, Debug)]
pub(super) enum Binding {
    Param(ParamId),
    Space(usize),
    /// `space s[1..4] = ...`: the index sets and the space of each member.
    Family {
        sets: Vec<IndexSet>,
        members: BTreeMap<Vec<IndexValue>, usize>,
    },
    Value(Value),
}

/// The names in scope and the spaces operators act on.
pub(super) struct Scope {
    names: BTreeMap<String, Binding>,
    spaces: Vec<Space>,
    /// Index variables of the `sum`s being evaluated, innermost last.
    locals: RefCell<Vec<(String, Value)>>,
    /// Whether a `quantity` line is being evaluated (where `E|...>` may appear).
    in_quantity: std::cell::Cell<bool>,
}

impl Scope {
    /// A scope knowing the parameters (`params[k]` is `ParamId(k)`) and the spaces.
    pub(super) fn new(spaces: Vec<Space>, params: &[String]) -> Scope {
        let mut names = BTreeMap::new();
        for (k, name) in params.iter().enumerate() {
            let id = ParamId(u32::try_from(k).unwrap_or(u32::MAX));
            names.insert(name.clone(), Binding::Param(id));
        }
        Scope {
            names,
            spaces,
            locals: RefCell::new(Vec::new()),
            in_quantity: std::cell::Cell::new(false),
        }
    }

    pub(super) fn bind(&mut self, name: &str, binding: Binding) {
        self.names.insert(name.to_string(), binding);
    }

    /// A scalar as `scalar * identity`; an operator as itself.
    pub(super) fn to_operator(&self, value: Value) -> Option<OperatorExpr> {
        match value {
            Value::Scalar(scalar) => Some(OperatorExpr::identity().scale(&scalar)),
            Value::Operator(operator) => Some(operator),
            Value::Label(_) | Value::Energies(_) => None,
        }
    }

    /// Evaluates the value of a `quantity` line: a combination of branch energies.
    pub(super) fn eval_quantity(
        &self,
        expr: &ast::Expr,
    ) -> Result<Vec<(ast::StateKet, RatFunc)>, Diagnostic> {
        self.in_quantity.set(true);
        let value = self.eval(expr);
        self.in_quantity.set(false);
        match value? {
            Value::Energies(terms) if !terms.is_empty() => Ok(terms),
            _ => Err(LowerError::Expected {
                what: "a quantity is a combination of branch energies like `E|1, 0> - E|0, 0>`",
            })
            .at(expr.span),
        }
    }

    /// The rational number a value is, if it is one (a scalar free of parameters and radicals).
    pub(super) fn as_rational(&self, value: &Value) -> Option<Rational> {
        match value {
            Value::Scalar(scalar) => scalar.as_constant().and_then(|c| c.as_rational()),
            _ => None,
        }
    }

    /// Evaluates an expression. Recursion depth is bounded by the syntax limits on nesting and
    /// on operators per statement.
    pub(super) fn eval(&self, expr: &ast::Expr) -> Result<Value, Diagnostic> {
        let value = match &expr.kind {
            ast::ExprKind::Number(text) => {
                let value = parse_number(text).at(expr.span)?;
                Value::Scalar(RatFunc::from_rational(&value))
            }
            ast::ExprKind::Name(name) => self.eval_name(name, expr.span)?,
            ast::ExprKind::Member { space, index, member } => {
                self.eval_member(space, index.as_deref(), member)?
            }
            ast::ExprKind::KetBra { ket, bra } => self.eval_ket_bra(ket, bra)?,
            ast::ExprKind::Call { function, args } => self.eval_call(function, args, expr.span)?,
            ast::ExprKind::Matrix { space, rows } => self.eval_matrix(space, rows, expr.span)?,
            ast::ExprKind::Sum { binders, body } => self.eval_sum(binders, body, expr.span)?,
            ast::ExprKind::BranchEnergy(ket) => {
                if !self.in_quantity.get() {
                    return Err(LowerError::Expected {
                        what: "a branch energy `E|...>` can stand only in a `quantity` line",
                    })
                    .at(expr.span);
                }
                Value::Energies(vec![(ket.clone(), RatFunc::one())])
            }
            ast::ExprKind::Neg(operand) => match self.eval(operand)? {
                Value::Label(_) => return Err(LowerError::BadIndex).at(operand.span),
                value => negate(value),
            },
            ast::ExprKind::Binary { op, lhs, rhs } => {
                within_size_limits(self.eval_binary(*op, lhs, rhs)?, expr.span)?
            }
        };
        if let Value::Operator(operator) = &value {
            if operator.cost() > MAX_OPERATOR_COST {
                return Err(LowerError::OperatorTooComplex).at(expr.span).map_err(|d| {
                    d.with_hint("build large powers from smaller pieces, or use a sector")
                });
            }
        }
        Ok(value)
    }

    fn local(&self, name: &str) -> Option<Value> {
        let locals = self.locals.borrow();
        locals.iter().rev().find(|(n, _)| n == name).map(|(_, v)| v.clone())
    }

    fn eval_name(&self, name: &str, span: Span) -> Result<Value, Diagnostic> {
        if let Some(value) = self.local(name) {
            return Ok(value);
        }
        match self.names.get(name) {
            Some(Binding::Param(id)) => Ok(Value::Scalar(RatFunc::param(*id))),
            Some(Binding::Value(value)) => Ok(value.clone()),
            Some(Binding::Space(idx)) => {
                let kind = self.spaces[*idx].kind();
                let hint = format!("its operators are {}", kind.operator_names());
                Err(LowerError::SpaceAsValue { name: name.to_string() })
                    .at(span)
                    .map_err(|d| d.with_hint(hint))
            }
            Some(Binding::Family { .. }) => {
                Err(LowerError::SpaceAsValue { name: name.to_string() }).at(span).map_err(|d| {
                    d.with_hint(format!("name a member and an operator, like `{name}[1].z`"))
                })
            }
            None if name == "i" => Ok(Value::Scalar(RatFunc::constant(Radical::i()))),
            None => {
                let err = Err(LowerError::UnknownName { name: name.to_string() }).at(span);
                match self.suggest(name) {
                    Some(close) => err.map_err(|d| d.with_hint(format!("did you mean `{close}`?"))),
                    None => err.map_err(|d| {
                        d.with_hint(format!("declare a real symbol with `param {name}`"))
                    }),
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

    /// An index value: a bound index variable, a bare name (a value of a named set), or a
    /// whole number.
    fn eval_index_value(&self, expr: &ast::Expr) -> Result<IndexValue, Diagnostic> {
        if let ast::ExprKind::Name(name) = &expr.kind {
            if self.local(name).is_none() && !self.names.contains_key(name) {
                return Ok(IndexValue::Name(name.clone()));
            }
        }
        match self.eval(expr)? {
            Value::Label(name) => Ok(IndexValue::Name(name)),
            value => self
                .as_rational(&value)
                .filter(Rational::is_integer)
                .and_then(|r| r.to_i64())
                .map(IndexValue::Int)
                .ok_or(LowerError::BadIndex)
                .at(expr.span),
        }
    }

    fn eval_index(
        &self,
        sets: &[IndexSet],
        index: &[ast::Expr],
        span: Span,
    ) -> Result<Vec<IndexValue>, Diagnostic> {
        if index.len() != sets.len() {
            return Err(LowerError::WrongIndexCount { expected: sets.len(), found: index.len() })
                .at(span);
        }
        let mut values = Vec::with_capacity(index.len());
        for (set, expr) in sets.iter().zip(index) {
            let value = self.eval_index_value(expr)?;
            if set.position(&value).is_none() {
                return Err(LowerError::IndexOutOfRange {
                    value: value.to_string(),
                    set: set.to_string(),
                })
                .at(expr.span);
            }
            values.push(value);
        }
        Ok(values)
    }

    /// The factor a (possibly indexed) space name refers to, with the index left over for a
    /// fermion space's mode.
    fn resolve_space<'a>(
        &self,
        ident: &ast::Ident,
        index: Option<&'a [ast::Expr]>,
    ) -> Result<(usize, Option<&'a [ast::Expr]>), Diagnostic> {
        let index_span =
            |index: &[ast::Expr]| index.iter().fold(ident.span, |acc, e| acc.to(e.span));
        match (self.names.get(&ident.name), index) {
            (Some(Binding::Space(idx)), index) => Ok((*idx, index)),
            (Some(Binding::Family { sets, members }), Some(index)) => {
                let values = self.eval_index(sets, index, index_span(index))?;
                Ok((members[&values], None))
            }
            (Some(Binding::Family { .. }), None) => {
                Err(LowerError::IndexNeeded { name: ident.name.clone() }).at(ident.span)
            }
            (Some(_), _) => Err(LowerError::NotASpace { name: ident.name.clone() }).at(ident.span),
            (None, _) => Err(LowerError::UnknownName { name: ident.name.clone() }).at(ident.span),
        }
    }

    fn eval_member(
        &self,
        space: &ast::Ident,
        index: Option<&[ast::Expr]>,
        member: &ast::Ident,
    ) -> Result<Value, Diagnostic> {
        let (space_idx, mode_index) = self.resolve_space(space, index)?;
        let factor = &self.spaces[space_idx];
        let kind = factor.kind();
        let local = match (kind.fermions(), mode_index) {
            (Some(fermions), Some(index)) => {
                let span = index.iter().fold(space.span, |acc, e| acc.to(e.span));
                let values = self.eval_index(fermions.index_sets(), index, span)?;
                let mode = fermions.mode(&values).expect("index checked against its sets");
                model::space::mode_operator(fermions, mode, &member.name)
            }
            (Some(_), None) => {
                return Err(LowerError::IndexNeeded { name: space.name.clone() })
                    .at(space.span)
                    .map_err(|d| {
                        d.with_hint(format!("its operators are {}", kind.operator_names()))
                    })
            }
            (None, Some(_)) => {
                return Err(LowerError::NotIndexed { name: factor.name.clone() }).at(space.span)
            }
            (None, None) => kind.operator(&member.name),
        };
        match local {
            Some(local) => Ok(Value::Operator(OperatorExpr::from_local(space_idx, local))),
            None => {
                if matches!(member.name.as_str(), "create" | "annihilate")
                    && kind.fermions().is_none()
                {
                    return Err(LowerError::NotFermionic { name: factor.name.clone() })
                        .at(member.span)
                        .map_err(|d| {
                            d.with_hint(format!("its operators are {}", kind.operator_names()))
                        });
                }
                Err(LowerError::UnknownMember {
                    space: factor.name.clone(),
                    member: member.name.clone(),
                })
                .at(member.span)
                .map_err(|d| d.with_hint(format!("its operators are {}", kind.operator_names())))
            }
        }
    }

    /// `sum(i in 1..N, s in [up, dn]: body)`: every combination, later sets evaluated with the
    /// earlier indices bound.
    fn eval_sum(
        &self,
        binders: &[ast::Binder],
        body: &ast::Expr,
        span: Span,
    ) -> Result<Value, Diagnostic> {
        for binder in binders {
            let name = &binder.name.name;
            // `i` may name an index: inside the sum it hides the imaginary unit, as on paper.
            if self.names.contains_key(name) || self.local(name).is_some() {
                return Err(LowerError::IndexHidesName { name: name.clone() }).at(binder.name.span);
            }
        }
        let mut acc: Option<Value> = None;
        self.sum_over(binders, body, &mut acc)?;
        acc.ok_or(LowerError::EmptySum).at(span)
    }

    fn sum_over(
        &self,
        binders: &[ast::Binder],
        body: &ast::Expr,
        acc: &mut Option<Value>,
    ) -> Result<(), Diagnostic> {
        let Some((binder, rest)) = binders.split_first() else {
            let term = self.eval(body)?;
            *acc = Some(match acc.take() {
                None => term,
                Some(sum) => add_values(sum, term).at(body.span)?,
            });
            return Ok(());
        };
        let set = self.eval_index_set(&binder.set, true)?;
        for value in set.values() {
            let value = match value {
                IndexValue::Int(n) => Value::Scalar(RatFunc::from_i64(n)),
                IndexValue::Name(name) => Value::Label(name),
            };
            self.locals.borrow_mut().push((binder.name.name.clone(), value));
            let res = self.sum_over(rest, body, acc);
            self.locals.borrow_mut().pop();
            res?;
        }
        Ok(())
    }

    /// Evaluates `1..N` or `[up, dn]`. A range may end one below its start (it is then empty,
    /// as `j in i+1..N` is when `i = N`) only where `allow_empty`.
    pub(super) fn eval_index_set(
        &self,
        set: &ast::IndexSetExpr,
        allow_empty: bool,
    ) -> Result<IndexSet, Diagnostic> {
        match set {
            ast::IndexSetExpr::Range { first, last, span } => {
                let bound = |expr: &ast::Expr| -> Result<i64, Diagnostic> {
                    let value = self.eval(expr)?;
                    self.as_rational(&value)
                        .filter(Rational::is_integer)
                        .and_then(|r| r.to_i64())
                        .filter(|n| n.abs() <= 1_000_000)
                        .ok_or(LowerError::BadIndex)
                        .at(expr.span)
                };
                let (first, last) = (bound(first)?, bound(last)?);
                let empty_ok = allow_empty && last == first - 1;
                if last < first && !empty_ok {
                    return Err(LowerError::BadRange { range: format!("{first}..{last}") })
                        .at(*span);
                }
                Ok(IndexSet::Range { first, last })
            }
            ast::IndexSetExpr::Names { names, .. } => {
                let mut seen: Vec<String> = Vec::new();
                for name in names {
                    if seen.contains(&name.name) {
                        return Err(LowerError::DuplicateLevel { label: name.name.clone() })
                            .at(name.span);
                    }
                    seen.push(name.name.clone());
                }
                Ok(IndexSet::Names(seen))
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
            "dagger" => ("dagger", 1),
            "adj" => ("adj", 1),
            "comm" => ("comm", 2),
            "cg" => ("cg", 6),
            "threej" => ("threej", 6),
            "root_between" => ("root_between", 3),
            // The spelling of earlier releases, read for one more release.
            "root" => ("root", 2),
            _ => {
                return Err(LowerError::UnknownFunction { name: function.name.clone() })
                    .at(function.span)
                    .map_err(|d| {
                        d.with_hint(
                            "the functions are `sqrt`, `dagger` (also `adj`), `comm`, `cg`, \
                             `threej`, `root_between`, `sum` and `matrix`",
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
            "dagger" | "adj" => match self.eval(&args[0])? {
                Value::Scalar(s) => Ok(Value::Scalar(s.conj())),
                Value::Operator(o) => Ok(Value::Operator(o.adjoint())),
                _ => Err(LowerError::BadIndex).at(args[0].span),
            },
            "cg" | "threej" => {
                let mut twice = [0i64; 6];
                for (slot, arg) in twice.iter_mut().zip(args) {
                    let value = self.eval(arg)?;
                    *slot = self
                        .as_rational(&value)
                        .map(|r| r * Rational::from_i64(2))
                        .filter(Rational::is_integer)
                        .and_then(|r| r.to_i64())
                        .ok_or_else(|| LowerError::Coupling {
                            why: "angular momenta and projections must be multiples of 1/2".into(),
                        })
                        .at(arg.span)?;
                }
                let res = if name == "cg" {
                    clebsch_gordan(twice[0], twice[1], twice[2], twice[3], twice[4], twice[5])
                } else {
                    wigner_3j([twice[0], twice[1], twice[2]], [twice[3], twice[4], twice[5]])
                };
                let value =
                    res.map_err(|e| LowerError::Coupling { why: e.to_string() }).at(span)?;
                Ok(Value::Scalar(RatFunc::constant(value)))
            }
            "root_between" | "root" => self.eval_root(name, args),
            _ => {
                let a = self.eval(&args[0])?;
                let b = self.eval(&args[1])?;
                let a = self.to_operator(a).ok_or(LowerError::BadIndex).at(args[0].span)?;
                let b = self.to_operator(b).ok_or(LowerError::BadIndex).at(args[1].span)?;
                Ok(Value::Operator(a.mul(&b).sub(&b.mul(&a))))
            }
        }
    }

    fn ket_bra_space(
        &self,
        ident: &ast::Ident,
        index: Option<&[ast::Expr]>,
    ) -> Result<usize, Diagnostic> {
        let (idx, rest) = self.resolve_space(ident, index)?;
        if rest.is_some() {
            return Err(LowerError::NotIndexed { name: self.spaces[idx].name.clone() })
                .at(ident.span);
        }
        let space = &self.spaces[idx];
        if !space.kind().has_ket_bras() || space.kind().n_fields() != 1 {
            return Err(LowerError::NoKetBras { name: space.name.clone() }).at(ident.span).map_err(
                |d| d.with_hint(format!("its operators are {}", space.kind().operator_names())),
            );
        }
        Ok(idx)
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
        let space_idx = self.ket_bra_space(space, None)?;
        let n = self.spaces[space_idx].dimension();
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
                    _ => {
                        return Err(LowerError::Expected {
                            what: "a matrix entry must be a scalar, not an operator",
                        })
                        .at(entry.span)
                    }
                }
            }
        }
        let local = model::Operator::from_triplets(n, n, triplets);
        Ok(Value::Operator(OperatorExpr::local(space_idx, local)))
    }

    fn eval_binary(
        &self,
        op: ast::BinaryOp,
        lhs: &ast::Expr,
        rhs: &ast::Expr,
    ) -> Result<Value, Diagnostic> {
        let left = self.eval(lhs)?;
        if op == ast::BinaryOp::Pow {
            return self.eval_power(left, lhs, rhs);
        }
        let right = self.eval(rhs)?;
        for (value, expr) in [(&left, lhs), (&right, rhs)] {
            if matches!(value, Value::Label(_)) {
                return Err(LowerError::BadIndex).at(expr.span);
            }
        }
        if op == ast::BinaryOp::Mul {
            // A product is bounded before it is computed: squaring a large value again and
            // again (`let x2 = x1 * x1`) would otherwise spend the time before the check.
            let n_products = match (&left, &right) {
                (Value::Operator(a), Value::Operator(_)) => a.max_local_dimension() as u64,
                _ => 1,
            };
            let (a, b) = (value_size(&left), value_size(&right));
            let bound = a.product_bound(&b, n_products);
            if !bound.is_allowed() || a.product_work(&b, n_products) > MAX_PRODUCT_WORK {
                return Err(LowerError::ValueTooLarge { size: bound }).at(lhs.span.to(rhs.span));
            }
        }
        Ok(match (op, left, right) {
            (ast::BinaryOp::Add, a, b) => add_values(a, b).at(lhs.span.to(rhs.span))?,
            (ast::BinaryOp::Sub, a, b) => add_values(a, negate(b)).at(lhs.span.to(rhs.span))?,
            (ast::BinaryOp::Mul, Value::Scalar(a), Value::Scalar(b)) => Value::Scalar(a * b),
            (ast::BinaryOp::Mul, Value::Operator(a), Value::Operator(b)) => {
                Value::Operator(a.mul(&b))
            }
            (ast::BinaryOp::Mul, Value::Scalar(s), Value::Operator(o))
            | (ast::BinaryOp::Mul, Value::Operator(o), Value::Scalar(s)) => {
                Value::Operator(o.scale(&s))
            }
            (ast::BinaryOp::Mul, Value::Scalar(s), Value::Energies(e))
            | (ast::BinaryOp::Mul, Value::Energies(e), Value::Scalar(s)) => {
                Value::Energies(e.into_iter().map(|(k, w)| (k, w * &s)).collect())
            }
            (ast::BinaryOp::Div, Value::Energies(e), Value::Scalar(divisor)) => {
                let inverse = divisor.inv().ok_or(LowerError::DivisionByZero).at(rhs.span)?;
                Value::Energies(e.into_iter().map(|(k, w)| (k, w * &inverse)).collect())
            }
            (_, Value::Energies(_), _) | (_, _, Value::Energies(_)) => {
                return Err(LowerError::Expected {
                    what: "branch energies combine only by sums and scalar weights",
                })
                .at(lhs.span.to(rhs.span))
            }
            (ast::BinaryOp::Div | ast::BinaryOp::Rem, _, Value::Operator(_)) => {
                return Err(LowerError::DivisionByOperator).at(rhs.span);
            }
            (ast::BinaryOp::Div, left, Value::Scalar(divisor)) => {
                let inverse = divisor.inv().ok_or(LowerError::DivisionByZero).at(rhs.span)?;
                match left {
                    Value::Scalar(s) => Value::Scalar(s * inverse),
                    Value::Operator(o) => Value::Operator(o.scale(&inverse)),
                    _ => unreachable!("labels and energies are handled above"),
                }
            }
            (ast::BinaryOp::Rem, left, Value::Scalar(divisor)) => {
                let whole = |v: &Value| {
                    self.as_rational(v).filter(Rational::is_integer).and_then(|r| r.to_i64())
                };
                let (a, b) = (whole(&left), whole(&Value::Scalar(divisor)));
                match (a, b) {
                    (Some(a), Some(b)) if b != 0 => {
                        Value::Scalar(RatFunc::from_i64(a.rem_euclid(b.abs())))
                    }
                    _ => return Err(LowerError::BadRemainder).at(lhs.span.to(rhs.span)),
                }
            }
            _ => unreachable!("every pairing is handled above"),
        })
    }

    /// `base ^ exponent`: any integer power of a scalar (negative powers invert), a
    /// non-negative integer power of an operator.
    fn eval_power(
        &self,
        base: Value,
        base_expr: &ast::Expr,
        exponent: &ast::Expr,
    ) -> Result<Value, Diagnostic> {
        let span = base_expr.span.to(exponent.span);
        let exponent_value = self.eval(exponent)?;
        if !matches!(exponent_value, Value::Scalar(_)) {
            return Err(LowerError::Expected {
                what: "the exponent must be a scalar, not an operator",
            })
            .at(exponent.span);
        }
        let rational = self.as_rational(&exponent_value);
        let n = match (&base, rational) {
            (Value::Label(_) | Value::Energies(_), _) => {
                return Err(LowerError::BadIndex).at(base_expr.span)
            }
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
                let bound = s.pow_size_bound(n);
                if !bound.is_allowed() {
                    return Err(LowerError::ValueTooLarge { size: bound }).at(span);
                }
                let power = s.pow(exponent).ok_or(LowerError::DivisionByZero).at(span)?;
                Ok(Value::Scalar(power))
            }
            Value::Operator(o) => {
                // Bound the coefficients of the power before forming it.
                let size = o.entry_size();
                let dim = o.max_local_dimension() as u64;
                let mut bound = size;
                for _ in 1..n {
                    bound = bound.product_bound(&size, dim);
                    if !bound.is_allowed() {
                        return Err(LowerError::ValueTooLarge { size: bound }).at(span);
                    }
                }
                Ok(Value::Operator(o.pow(n as u64)))
            }
            _ => unreachable!("refused above"),
        }
    }

    /// Which single-label spaces have a state with this label.
    fn candidates(&self, label: &str) -> Vec<usize> {
        (0..self.spaces.len())
            .filter(|idx| {
                let kind = self.spaces[*idx].kind();
                kind.has_ket_bras() && kind.n_fields() == 1 && kind.find_state(&[label]).is_some()
            })
            .collect()
    }

    /// Resolves `|ket><bra|` to a factor and two of its states; a qualified label on either side
    /// fixes the factor for both.
    fn eval_ket_bra(&self, ket: &ast::Label, bra: &ast::Label) -> Result<Value, Diagnostic> {
        let qualified = [ket, bra].into_iter().find(|label| label.space.is_some());
        let space_idx = match qualified {
            Some(label) => {
                let ident = label.space.as_ref().expect("qualified");
                let idx = self.ket_bra_space(ident, label.space_index.as_deref())?;
                for label in [ket, bra] {
                    if let Some(other) = &label.space {
                        let other_idx = self.ket_bra_space(other, label.space_index.as_deref())?;
                        if other_idx != idx {
                            return Err(LowerError::LabelsOnDifferentSpaces).at(label.span);
                        }
                    }
                }
                idx
            }
            None => {
                let ket_spaces = self.candidates(&label_text(&ket.local));
                let bra_spaces = self.candidates(&label_text(&bra.local));
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
                        let spaces: Vec<String> =
                            several.iter().map(|idx| self.spaces[*idx].name.clone()).collect();
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
        let factor = &self.spaces[space_idx];
        let mut states = [0; 2];
        for (slot, label) in states.iter_mut().zip([ket, bra]) {
            *slot = factor
                .kind()
                .find_state(&[&label_text(&label.local)])
                .ok_or_else(|| LowerError::UnknownLabel { label: label_text(&label.local) })
                .at(label.span)?;
        }
        let local = Space::ket_bra(factor.dimension(), states[0], states[1]);
        Ok(Value::Operator(OperatorExpr::local(space_idx, local)))
    }
}

/// `-value`.
fn negate(value: Value) -> Value {
    match value {
        Value::Scalar(s) => Value::Scalar(-s),
        Value::Operator(o) => Value::Operator(o.scale(&-RatFunc::one())),
        Value::Energies(e) => Value::Energies(e.into_iter().map(|(k, w)| (k, -w)).collect()),
        label => label,
    }
}

/// `a + b`, where a scalar next to an operator is that scalar times the identity.
fn add_values(a: Value, b: Value) -> Result<Value, LowerError> {
    Ok(match (a, b) {
        (Value::Scalar(a), Value::Scalar(b)) => Value::Scalar(a + b),
        (Value::Operator(a), Value::Operator(b)) => Value::Operator(a.add(&b)),
        (Value::Scalar(s), Value::Operator(o)) | (Value::Operator(o), Value::Scalar(s)) => {
            Value::Operator(o.add_scalar(&s))
        }
        (Value::Energies(mut a), Value::Energies(b)) => {
            for (ket, w) in b {
                let same = |k: &ast::StateKet| {
                    k.fields.iter().map(|f| &f.0).eq(ket.fields.iter().map(|f| &f.0))
                };
                match a.iter_mut().find(|(k, _)| same(k)) {
                    Some((_, acc)) => *acc += &w,
                    None => a.push((ket, w)),
                }
            }
            a.retain(|(_, w)| !w.is_zero());
            Value::Energies(a)
        }
        _ => return Err(LowerError::BadIndex),
    })
}

/// The value unchanged when its scalar (or every coefficient of an operator) is within the size
/// limits.
fn within_size_limits(value: Value, span: Span) -> Result<Value, Diagnostic> {
    let size = match &value {
        Value::Scalar(s) => s.size(),
        Value::Operator(o) => o.entry_size(),
        Value::Label(_) | Value::Energies(_) => return Ok(value),
    };
    if size.is_allowed() {
        Ok(value)
    } else {
        Err(LowerError::ValueTooLarge { size }).at(span)
    }
}

/// The size of a scalar or of an operator's largest coefficient.
fn value_size(value: &Value) -> ValueSize {
    match value {
        Value::Scalar(s) => s.size(),
        Value::Operator(o) => o.entry_size(),
        Value::Label(_) | Value::Energies(_) => ValueSize::default(),
    }
}

/// The most characters a number literal may have (about [`crate::exact::MAX_VALUE_BITS`]).
const MAX_LITERAL_DIGITS: usize = 1000;

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
    if exponent.abs() > MAX_DECIMAL_EXPONENT || text.len() > MAX_LITERAL_DIGITS {
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
                ast::BinaryOp::Rem => return bad(),
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
