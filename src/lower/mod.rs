//! From the syntax tree to the typed [`Model`]: resolving names, telling scalars from operators,
//! and evaluating both exactly. Start from [`lower`]; it also returns a [`SourceMap`] so that later
//! errors can point back into the text. Reads `ast` only, never pest pairs; knows no output format.

mod error;
mod eval;

use std::collections::BTreeMap;

pub use error::{LowerError, MAX_EXPONENT};

use crate::diagnostics::{At, Diagnostic, Span};
use crate::exact::{Field, RatFunc, Rational};
use crate::model::{self, Basis, Model, ModelError, Param, Space, SpaceKind, MAX_DIMENSION};
use crate::syntax::{self, ast};
use eval::{Binding, Scope, Value};

/// Where the parts of a [`Model`] were written, for errors found after lowering.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct SourceMap {
    /// The `param` item of each parameter, indexed like [`Model::params`].
    pub params: Vec<Span>,
    /// The `space` statement of each factor, in declaration order.
    pub spaces: Vec<Span>,
    /// The `H0 = ...` statement.
    pub h0: Span,
    /// The statement of each perturbation term (`perturbations[k]` is `V(k+1)`); `None` for a
    /// term that was left out and is zero.
    pub perturbations: Vec<Option<Span>>,
    /// Each `focus` statement, in order (as in [`Model::focus`]).
    pub focus: Vec<Span>,
    /// The `order` statement, if any.
    pub order: Option<Span>,
}

impl SourceMap {
    /// Where to point an input problem found by the engine, which has no span of its own: the
    /// first `focus` line if there is one (the usual culprit), else the `V` statement.
    pub fn engine_input(&self) -> Span {
        self.focus
            .first()
            .copied()
            .or_else(|| self.perturbations.first().copied().flatten())
            .unwrap_or(self.h0)
    }
}

/// Lowers a parsed model to a checked [`Model`] and its [`SourceMap`].
pub fn lower(file: &ast::File) -> Result<(Model, SourceMap), Diagnostic> {
    check_declarations(file)?;
    let (params, param_spans) = lower_params(file);
    let param_names: Vec<String> = params.iter().map(|p| p.name.clone()).collect();
    let (spaces, space_spans) = lower_spaces(file, &param_names)?;
    let basis = Basis::new(spaces.clone()).expect("dimension checked by lower_spaces");
    let mut scope = Scope::new(basis, &param_names);
    for (space_idx, space) in spaces.iter().enumerate() {
        scope.bind(&space.name, Binding::Space(space_idx));
    }
    // Terms by their order: 0 for H0, k for Vk; each with its name as written and its statement.
    let mut terms: BTreeMap<usize, (String, model::Operator, Span)> = BTreeMap::new();
    let mut focus = Vec::new();
    let mut focus_spans = Vec::new();
    let mut order = None;
    let mut order_span = None;
    for statement in &file.statements {
        match statement {
            ast::Statement::Param(_) | ast::Statement::Space(_) => {}
            ast::Statement::Let(decl) => {
                let value = scope.eval(&decl.value)?;
                scope.bind(&decl.name.name, Binding::Value(value));
            }
            ast::Statement::Term(def) => {
                let term = term_index(&def.name.name)
                    .ok_or_else(|| LowerError::UnknownTerm { name: def.name.name.clone() })
                    .at(def.name.span)
                    .map_err(|d| {
                        d.with_hint(format!("write `let {} = ...` to name a value", def.name.name))
                    })?;
                let value = scope.eval(&def.value)?;
                let operator = scope.to_operator(value.clone());
                if terms.contains_key(&term) {
                    // `V` and `V1` are the same term.
                    return Err(LowerError::DeclaredTwice { name: def.name.name.clone() })
                        .at(def.name.span);
                }
                terms.insert(term, (def.name.name.clone(), operator, def.span));
                scope.bind(&def.name.name, Binding::Value(value));
            }
            ast::Statement::Focus(decl) => {
                let mut energies = Vec::new();
                for energy in &decl.energies {
                    match scope.eval(energy)? {
                        Value::Scalar(value) => energies.push(value),
                        Value::Operator(_) => {
                            return Err(LowerError::Expected {
                                what: "a focus energy must be a scalar, not an operator",
                            })
                            .at(energy.span)
                        }
                    }
                }
                focus.push(energies);
                focus_spans.push(decl.span);
            }
            ast::Statement::Order(decl) => {
                let value = scope.eval(&decl.order)?;
                let rational = scope.as_rational(&value);
                let n = match rational.as_ref().map(|r| (r.is_integer() && !r.is_negative(), r)) {
                    Some((true, r)) => r
                        .to_i64()
                        .and_then(|n| u32::try_from(n).ok())
                        .filter(|&n| n <= model::MAX_ORDER)
                        .ok_or(LowerError::OrderTooLarge),
                    _ => Err(LowerError::BadOrder),
                }
                .at(decl.order.span)?;
                if order.is_some() {
                    return Err(LowerError::DeclaredTwice { name: "order".to_string() })
                        .at(decl.span);
                }
                order = Some(n);
                order_span = Some(decl.span);
            }
        }
    }
    let end = Span::new(file.span.end, file.span.end);
    let (_, h0, h0_span) = terms.remove(&0).ok_or(LowerError::MissingH0).at(end)?;
    let n_perturbations = terms.keys().next_back().copied().unwrap_or(0);
    if !terms.contains_key(&1) {
        let diagnostic = Err::<(), _>(LowerError::MissingV).at(end).expect_err("an error");
        return Err(diagnostic.with_hint("add a line `V = ...`; it enters at first order"));
    }
    let mut names = vec!["H0".to_string()];
    let mut spans = vec![h0_span];
    let mut perturbations = Vec::new();
    let mut perturbation_spans = Vec::new();
    for k in 1..=n_perturbations {
        match terms.remove(&k) {
            Some((name, operator, span)) => {
                names.push(name);
                spans.push(span);
                perturbations.push(operator);
                perturbation_spans.push(Some(span));
            }
            None => {
                names.push(format!("V{k}"));
                spans.push(end);
                perturbations.push(model::Operator::zeros(scope.dimension(), scope.dimension()));
                perturbation_spans.push(None);
            }
        }
    }
    let basis = scope.basis().clone();
    let h0_for_errors = h0.clone();
    let perturbations_for_errors = perturbations.clone();
    let model = Model::new(params, basis, h0, perturbations, focus, order).map_err(|err| {
        let operator = |term: usize| {
            if term == 0 {
                &h0_for_errors
            } else {
                &perturbations_for_errors[term - 1]
            }
        };
        match err {
            ModelError::NotHermitian { term, row, col } => {
                let err =
                    not_hermitian(&scope, &names[term], operator(term), row, col, &param_names);
                Diagnostic::new(err.to_string(), value_span(file, spans[term]))
            }
            ModelError::WrongDimension { term } => {
                Diagnostic::new(format!("{} has the wrong size", names[term]), spans[term])
            }
            ModelError::MissingPerturbation => {
                Diagnostic::new(LowerError::MissingV.to_string(), end)
            }
        }
    })?;
    let source_map = SourceMap {
        params: param_spans,
        spaces: space_spans,
        h0: h0_span,
        perturbations: perturbation_spans,
        focus: focus_spans,
        order: order_span,
    };
    Ok((model, source_map))
}

/// The span of the value of the term statement at `statement`, so that a Hermiticity error
/// underlines the operator rather than the name.
fn value_span(file: &ast::File, statement: Span) -> Span {
    file.statements
        .iter()
        .find_map(|s| match s {
            ast::Statement::Term(def) if def.span == statement => Some(def.value.span),
            _ => None,
        })
        .unwrap_or(statement)
}

/// `H0` is term 0; `V` and `V1` are term 1; `Vk` is term k.
fn term_index(name: &str) -> Option<usize> {
    match name {
        "H0" => Some(0),
        "V" => Some(1),
        _ => {
            let digits = name.strip_prefix('V')?;
            if digits.starts_with('0') {
                return None;
            }
            digits.parse::<usize>().ok().filter(|k| *k >= 1 && *k <= 64)
        }
    }
}

fn not_hermitian(
    scope: &Scope,
    term: &str,
    operator: &model::Operator,
    row: usize,
    col: usize,
    param_names: &[String],
) -> LowerError {
    let symbols = crate::exact::Symbols { names: param_names };
    let label = |idx: usize| {
        let ket = scope.basis().ket_label(idx);
        ket.trim_start_matches('|').trim_end_matches('>').to_string()
    };
    // Report the entry that is present, so the message never reads `0 but conj(0)`.
    let (row, col) = if operator.get(row, col).is_zero() { (col, row) } else { (row, col) };
    LowerError::NotHermitian {
        term: term.to_string(),
        entry: format!("<{}|{term}|{}>", label(row), label(col)),
        value: operator.get(row, col).display(symbols).to_string(),
        mirror: format!("<{}|{term}|{}>", label(col), label(row)),
        mirror_conj: operator.get(col, row).conj().display(symbols).to_string(),
    }
}

/// Every declared name once, in source order; the second declaration is the one reported.
fn check_declarations(file: &ast::File) -> Result<(), Diagnostic> {
    let mut seen: BTreeMap<String, Span> = BTreeMap::new();
    let mut declare = |ident: &ast::Ident| -> Result<(), Diagnostic> {
        if ident.name == "i" {
            return Err(LowerError::Reserved { name: ident.name.clone() })
                .at(ident.span)
                .map_err(|d| d.with_hint("`i` is the imaginary unit"));
        }
        if seen.insert(ident.name.clone(), ident.span).is_some() {
            return Err(LowerError::DeclaredTwice { name: ident.name.clone() }).at(ident.span);
        }
        Ok(())
    };
    for statement in &file.statements {
        match statement {
            ast::Statement::Param(decl) => {
                for item in &decl.items {
                    // The outputs write the series in `lambda` and secular equations in `x`;
                    // a parameter of either name would read as them.
                    let meaning = match item.name.name.as_str() {
                        "lambda" => Some("`lambda` is the expansion parameter of the series"),
                        "x" => Some("`x` is the variable of the secular equations"),
                        _ => None,
                    };
                    if let Some(meaning) = meaning {
                        return Err(LowerError::Reserved { name: item.name.name.clone() })
                            .at(item.name.span)
                            .map_err(|d| d.with_hint(format!("{meaning}; choose another name")));
                    }
                    declare(&item.name)?;
                }
            }
            ast::Statement::Space(decl) => declare(&decl.name)?,
            ast::Statement::Let(decl) => declare(&decl.name)?,
            ast::Statement::Term(def) => {
                // `V` and `V1` name one term; the later one is caught when terms are collected.
                declare(&def.name)?
            }
            ast::Statement::Focus(_) | ast::Statement::Order(_) => {}
        }
    }
    Ok(())
}

fn lower_params(file: &ast::File) -> (Vec<Param>, Vec<Span>) {
    let mut params = Vec::new();
    let mut spans = Vec::new();
    for statement in &file.statements {
        if let ast::Statement::Param(decl) = statement {
            for item in &decl.items {
                params.push(Param { name: item.name.name.clone(), positive: item.positive });
                spans.push(item.span);
            }
        }
    }
    (params, spans)
}

/// The declared spaces, checking their arguments and that their product stays within
/// [`MAX_DIMENSION`] (reported at the space that crosses it).
fn lower_spaces(
    file: &ast::File,
    param_names: &[String],
) -> Result<(Vec<Space>, Vec<Span>), Diagnostic> {
    let scalars =
        Scope::new(Basis::new(Vec::new()).expect("the empty product has one state"), param_names);
    let mut spaces = Vec::new();
    let mut spans = Vec::new();
    let mut dimension: usize = 1;
    for statement in &file.statements {
        let ast::Statement::Space(decl) = statement else { continue };
        let kind = match &decl.kind {
            ast::SpaceKind::Oscillator { n_states, .. } => {
                let value = scalars.eval(n_states)?;
                let n = scalars
                    .as_rational(&value)
                    .filter(|r| r.is_integer() && r.is_positive())
                    .ok_or(LowerError::BadOscillator)
                    .at(n_states.span)?;
                let n_states =
                    n.to_i64().and_then(|n| usize::try_from(n).ok()).unwrap_or(usize::MAX);
                SpaceKind::Oscillator { n_states: n_states.min(MAX_DIMENSION + 1) }
            }
            ast::SpaceKind::Spin { j, .. } => {
                let value = scalars.eval(j)?;
                let twice_j = scalars
                    .as_rational(&value)
                    .map(|r| r * Rational::from_i64(2))
                    .filter(|r| r.is_integer() && r.is_positive())
                    .ok_or(LowerError::BadSpin)
                    .at(j.span)
                    .map_err(|d| d.with_hint("write j as a whole number or a half: `spin(1/2)`, `spin(1)`, `spin(3/2)`"))?;
                let twice_j =
                    twice_j.to_i64().and_then(|n| u32::try_from(n).ok()).unwrap_or(u32::MAX);
                SpaceKind::Spin { twice_j: twice_j.min(MAX_DIMENSION as u32) }
            }
            ast::SpaceKind::Levels { labels, .. } => {
                let mut names: Vec<String> = Vec::new();
                for label in labels {
                    if names.contains(&label.name) {
                        return Err(LowerError::DuplicateLevel { label: label.name.clone() })
                            .at(label.span);
                    }
                    names.push(label.name.clone());
                }
                SpaceKind::Levels { labels: names }
            }
        };
        let space = Space { name: decl.name.name.clone(), kind };
        dimension = dimension.saturating_mul(space.dimension());
        if dimension > MAX_DIMENSION {
            return Err(LowerError::TooManyStates).at(decl.kind.span());
        }
        spaces.push(space);
        spans.push(decl.span);
    }
    Ok((spaces, spans))
}

/// Parses and evaluates one scalar expression in which the names `params` stand for
/// `RatFunc::param(ParamId(k))`, as in a value printed by cleave and read back.
pub fn eval_scalar(text: &str, params: &[String]) -> Result<RatFunc, Diagnostic> {
    let expr = syntax::parse_expr(text)?;
    let scope =
        Scope::new(Basis::new(Vec::new()).expect("the empty product has one state"), params);
    match scope.eval(&expr)? {
        Value::Scalar(value) => Ok(value),
        Value::Operator(_) => Err(LowerError::Expected { what: "expected a scalar" }).at(expr.span),
    }
}

/// Parses a rational number written as a scalar expression (`1/8`, `0.125`, `-3`, `2^-3`), as
/// in `--at g=1/8`.
pub fn parse_rational(text: &str) -> Result<Rational, Diagnostic> {
    let value = eval_scalar(text, &[])?;
    value
        .as_constant()
        .and_then(|c| c.as_rational())
        .ok_or(LowerError::Expected { what: "expected a rational number" })
        .at(Span::new(0, text.len()))
}
