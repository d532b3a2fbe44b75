//! The pest parser and the walk from pest pairs to [`ast`] nodes.
//! Each `parse_<rule>` function builds the `ast` type of the same stem from a pair of that rule;
//! the grammar guarantees the shape of every pair, which the `expect`s rely on.

use pest::iterators::Pair;
use pest::Parser;
use pest_derive::Parser;

use super::{ast, SyntaxError};
use crate::diagnostics::{Diagnostic, Span};

#[derive(Parser)]
#[grammar = "../grammar/cleave.pest"]
struct CleaveParser;

type Pairs<'i> = pest::iterators::Pairs<'i, Rule>;

pub(super) fn parse_file(text: &str) -> Result<ast::File, Diagnostic> {
    let mut pairs = parse_rule(Rule::file, text)?;
    let file = pairs.next().expect("grammar: `file` matched");
    let span = span_of(&file);
    let statements = file
        .into_inner()
        .filter(|pair| !matches!(pair.as_rule(), Rule::line_end | Rule::EOI))
        .map(parse_statement)
        .collect();
    Ok(ast::File { statements, span })
}

pub(super) fn parse_scalar_input(text: &str) -> Result<ast::Expr, Diagnostic> {
    let mut pairs = parse_rule(Rule::scalar_input, text)?;
    let input = pairs.next().expect("grammar: `scalar_input` matched");
    Ok(parse_expr(first_inner(input)))
}

/// Pest collects the literal tokens it tried only when asked to; this is a process-wide switch,
/// set before every parse so that messages can name a missing `=` or `)`.
fn parse_rule(rule: Rule, text: &str) -> Result<Pairs<'_>, Diagnostic> {
    pest::set_error_detail(true);
    CleaveParser::parse(rule, text).map_err(|err| friendly(text, err))
}

fn span_of(pair: &Pair<'_, Rule>) -> Span {
    Span::new(pair.as_span().start(), pair.as_span().end())
}

fn first_inner(pair: Pair<'_, Rule>) -> Pair<'_, Rule> {
    pair.into_inner().next().expect("grammar: rule has a child")
}

/// The children of a pair without its keyword token.
fn children(pair: Pair<'_, Rule>) -> Pairs<'_> {
    pair.into_inner()
}

fn is_keyword(rule: Rule) -> bool {
    matches!(
        rule,
        Rule::kw_param
            | Rule::kw_space
            | Rule::kw_let
            | Rule::kw_focus
            | Rule::kw_order
            | Rule::kw_sector
            | Rule::kw_quantity
            | Rule::kw_as
            | Rule::kw_sum
            | Rule::kw_in
    )
}

fn parse_statement(pair: Pair<'_, Rule>) -> ast::Statement {
    match pair.as_rule() {
        Rule::param_decl => ast::Statement::Param(parse_param_decl(pair)),
        Rule::space_decl => ast::Statement::Space(parse_space_decl(pair)),
        Rule::let_decl => ast::Statement::Let(parse_let_decl(pair)),
        Rule::term_def => ast::Statement::Term(parse_term_def(pair)),
        Rule::focus_decl => ast::Statement::Focus(parse_focus_decl(pair)),
        Rule::order_decl => ast::Statement::Order(parse_order_decl(pair)),
        Rule::sector_decl => ast::Statement::Sector(parse_sector_decl(pair)),
        Rule::quantity_decl => {
            let span = span_of(&pair);
            let mut inner = children(pair).filter(|p| !is_keyword(p.as_rule()));
            let name = parse_ident(inner.next().expect("grammar: quantity name"));
            let value = parse_expr(inner.next().expect("grammar: quantity value"));
            ast::Statement::Quantity(ast::QuantityDecl { name, value, span })
        }
        rule => unreachable!("grammar: {rule:?} is not a statement"),
    }
}

fn parse_ident(pair: Pair<'_, Rule>) -> ast::Ident {
    ast::Ident { name: pair.as_str().to_string(), span: span_of(&pair) }
}

fn parse_param_decl(pair: Pair<'_, Rule>) -> ast::ParamDecl {
    let span = span_of(&pair);
    let items = children(pair).filter(|p| !is_keyword(p.as_rule())).map(parse_param_item).collect();
    ast::ParamDecl { items, span }
}

fn parse_param_item(pair: Pair<'_, Rule>) -> ast::ParamItem {
    let span = span_of(&pair);
    let mut inner = pair.into_inner();
    let name = parse_ident(inner.next().expect("grammar: param name"));
    let positive = inner.next().is_some();
    ast::ParamItem { name, positive, span }
}

fn parse_space_decl(pair: Pair<'_, Rule>) -> ast::SpaceDecl {
    let span = span_of(&pair);
    let mut inner = children(pair).filter(|p| !is_keyword(p.as_rule()));
    let name = parse_ident(inner.next().expect("grammar: space name"));
    let mut next = inner.next().expect("grammar: space kind");
    let family = if next.as_rule() == Rule::family {
        let sets = next.into_inner().map(parse_index_set).collect();
        next = inner.next().expect("grammar: space kind after family");
        Some(sets)
    } else {
        None
    };
    let kind = parse_space_kind(next);
    ast::SpaceDecl { name, family, kind, span }
}

/// `1..N` or `[up, dn]`.
fn parse_index_set(pair: Pair<'_, Rule>) -> ast::IndexSetExpr {
    let span = span_of(&pair);
    match pair.as_rule() {
        Rule::range => {
            let mut inner = pair.into_inner();
            let first = parse_expr(inner.next().expect("grammar: range start"));
            let last = parse_expr(inner.next().expect("grammar: range end"));
            ast::IndexSetExpr::Range { first: Box::new(first), last: Box::new(last), span }
        }
        Rule::name_set => {
            ast::IndexSetExpr::Names { names: pair.into_inner().map(parse_ident).collect(), span }
        }
        rule => unreachable!("grammar: {rule:?} is not an index set"),
    }
}

fn parse_space_kind(pair: Pair<'_, Rule>) -> ast::SpaceKind {
    let span = span_of(&pair);
    match pair.as_rule() {
        Rule::oscillator => {
            ast::SpaceKind::Oscillator { n_states: parse_expr(first_inner(pair)), span }
        }
        Rule::spin => ast::SpaceKind::Spin { j: parse_expr(first_inner(pair)), span },
        Rule::levels => {
            ast::SpaceKind::Levels { labels: pair.into_inner().map(parse_ident).collect(), span }
        }
        Rule::ladder => ast::SpaceKind::Ladder { n_states: parse_expr(first_inner(pair)), span },
        Rule::rotor => ast::SpaceKind::Rotor { j_max: parse_expr(first_inner(pair)), span },
        Rule::fermions => ast::SpaceKind::Fermions {
            index_sets: pair.into_inner().map(parse_index_set).collect(),
            span,
        },
        rule => unreachable!("grammar: {rule:?} is not a space kind"),
    }
}

fn parse_let_decl(pair: Pair<'_, Rule>) -> ast::LetDecl {
    let span = span_of(&pair);
    let mut inner = children(pair).filter(|p| !is_keyword(p.as_rule()));
    let name = parse_ident(inner.next().expect("grammar: let name"));
    let value = parse_expr(inner.next().expect("grammar: let value"));
    ast::LetDecl { name, value, span }
}

fn parse_term_def(pair: Pair<'_, Rule>) -> ast::TermDef {
    let span = span_of(&pair);
    let mut inner = pair.into_inner();
    let name = parse_ident(inner.next().expect("grammar: term name"));
    let value = parse_expr(inner.next().expect("grammar: term value"));
    ast::TermDef { name, value, span }
}

fn parse_focus_decl(pair: Pair<'_, Rule>) -> ast::FocusDecl {
    let span = span_of(&pair);
    let mut items = Vec::new();
    let mut target = None;
    for p in children(pair).filter(|p| !is_keyword(p.as_rule())) {
        match p.as_rule() {
            Rule::state_ket => items.push(ast::FocusItem::State(parse_state_ket(p))),
            Rule::target => target = Some(parse_ident(p)),
            _ => items.push(ast::FocusItem::Energy(parse_expr(p))),
        }
    }
    ast::FocusDecl { items, target, span }
}

fn parse_state_ket(pair: Pair<'_, Rule>) -> ast::StateKet {
    let span = span_of(&pair);
    let fields = pair.into_inner().map(|f| (f.as_str().to_string(), span_of(&f))).collect();
    ast::StateKet { fields, span }
}

fn parse_sector_decl(pair: Pair<'_, Rule>) -> ast::SectorDecl {
    let span = span_of(&pair);
    let items = children(pair)
        .filter(|p| !is_keyword(p.as_rule()))
        .map(|item| {
            let span = span_of(&item);
            let mut inner = item.into_inner();
            let operator = parse_expr(inner.next().expect("grammar: sector operator"));
            let value = parse_expr(inner.next().expect("grammar: sector value"));
            ast::SectorItem { operator, value, span }
        })
        .collect();
    ast::SectorDecl { items, span }
}

fn parse_order_decl(pair: Pair<'_, Rule>) -> ast::OrderDecl {
    let span = span_of(&pair);
    let order = children(pair)
        .find(|p| !is_keyword(p.as_rule()))
        .map(parse_expr)
        .expect("grammar: order value");
    ast::OrderDecl { order, span }
}

/// `expr`: a left-associative chain of `term`s joined by `+` and `-`.
fn parse_expr(pair: Pair<'_, Rule>) -> ast::Expr {
    let mut inner = pair.into_inner();
    let mut acc = parse_term(inner.next().expect("grammar: first term"));
    while let Some(op) = inner.next() {
        let op = if op.as_str() == "+" { ast::BinaryOp::Add } else { ast::BinaryOp::Sub };
        let rhs = parse_term(inner.next().expect("grammar: term after operator"));
        acc = binary(op, acc, rhs);
    }
    acc
}

fn binary(op: ast::BinaryOp, lhs: ast::Expr, rhs: ast::Expr) -> ast::Expr {
    let span = lhs.span.to(rhs.span);
    ast::Expr { kind: ast::ExprKind::Binary { op, lhs: Box::new(lhs), rhs: Box::new(rhs) }, span }
}

/// `term`: a left-associative chain of `unary`s joined by `*` and `/`.
fn parse_term(pair: Pair<'_, Rule>) -> ast::Expr {
    let mut inner = pair.into_inner();
    let mut acc = parse_unary(inner.next().expect("grammar: first factor"));
    while let Some(op) = inner.next() {
        let op = match op.as_str() {
            "*" => ast::BinaryOp::Mul,
            "/" => ast::BinaryOp::Div,
            _ => ast::BinaryOp::Rem,
        };
        let rhs = parse_unary(inner.next().expect("grammar: factor after operator"));
        acc = binary(op, acc, rhs);
    }
    acc
}

/// `unary`: minus signs applied to a `power`.
fn parse_unary(pair: Pair<'_, Rule>) -> ast::Expr {
    let mut signs = Vec::new();
    let mut power = None;
    for child in pair.into_inner() {
        match child.as_rule() {
            Rule::neg => signs.push(span_of(&child)),
            _ => power = Some(parse_power(child)),
        }
    }
    negate(signs, power.expect("grammar: unary has a power"))
}

/// Applies the minus signs at `signs` (in source order) to `operand`, innermost last.
fn negate(signs: Vec<Span>, operand: ast::Expr) -> ast::Expr {
    signs.into_iter().rev().fold(operand, |acc, sign| {
        let span = sign.to(acc.span);
        ast::Expr { kind: ast::ExprKind::Neg(Box::new(acc)), span }
    })
}

/// `power`: `a0 ^ -a1 ^ a2` is `a0 ^ (-(a1 ^ a2))`, folded from the right.
fn parse_power(pair: Pair<'_, Rule>) -> ast::Expr {
    // Each operand with the minus signs written just before it.
    let mut operands: Vec<(Vec<Span>, ast::Expr)> = Vec::new();
    let mut signs = Vec::new();
    for child in pair.into_inner() {
        match child.as_rule() {
            Rule::pow_op => {}
            Rule::neg => signs.push(span_of(&child)),
            _ => operands.push((std::mem::take(&mut signs), parse_atom(child))),
        }
    }
    let (last_signs, last) = operands.pop().expect("grammar: power has an operand");
    let mut acc = negate(last_signs, last);
    while let Some((base_signs, base)) = operands.pop() {
        acc = negate(base_signs, binary(ast::BinaryOp::Pow, base, acc));
    }
    acc
}

fn parse_atom(pair: Pair<'_, Rule>) -> ast::Expr {
    let span = span_of(&pair);
    let kind = match pair.as_rule() {
        Rule::number => ast::ExprKind::Number(pair.as_str().to_string()),
        Rule::ident => ast::ExprKind::Name(pair.as_str().to_string()),
        Rule::paren => {
            let inner = parse_expr(first_inner(pair));
            return ast::Expr { kind: inner.kind, span };
        }
        Rule::call => parse_call(pair),
        Rule::sum_call => parse_sum_call(pair),
        Rule::branch_energy => ast::ExprKind::BranchEnergy(parse_state_ket(first_inner(pair))),
        Rule::member => parse_member(pair),
        Rule::matrix_call => parse_matrix_call(pair),
        Rule::ket_bra => parse_ket_bra(pair),
        rule => unreachable!("grammar: {rule:?} is not an atom"),
    };
    ast::Expr { kind, span }
}

fn parse_call(pair: Pair<'_, Rule>) -> ast::ExprKind {
    let mut inner = pair.into_inner();
    let function = parse_ident(inner.next().expect("grammar: function name"));
    let args = inner.map(parse_expr).collect();
    ast::ExprKind::Call { function, args }
}

fn parse_sum_call(pair: Pair<'_, Rule>) -> ast::ExprKind {
    let mut binders = Vec::new();
    let mut body = None;
    for child in children(pair).filter(|p| !is_keyword(p.as_rule())) {
        match child.as_rule() {
            Rule::binder => {
                let span = span_of(&child);
                let mut inner = child.into_inner().filter(|p| !is_keyword(p.as_rule()));
                let name = parse_ident(inner.next().expect("grammar: index variable"));
                let set = parse_index_set(inner.next().expect("grammar: index set"));
                binders.push(ast::Binder { name, set, span });
            }
            _ => body = Some(parse_expr(child)),
        }
    }
    ast::ExprKind::Sum { binders, body: Box::new(body.expect("grammar: sum has a body")) }
}

fn parse_index(pair: Pair<'_, Rule>) -> Vec<ast::Expr> {
    pair.into_inner().map(parse_expr).collect()
}

fn parse_member(pair: Pair<'_, Rule>) -> ast::ExprKind {
    let mut inner = pair.into_inner();
    let space = parse_ident(inner.next().expect("grammar: member's space"));
    let mut next = inner.next().expect("grammar: member's name");
    let index = if next.as_rule() == Rule::index {
        let index = parse_index(next);
        next = inner.next().expect("grammar: member's name after index");
        Some(index)
    } else {
        None
    };
    let member = parse_ident(next);
    ast::ExprKind::Member { space, index, member }
}

fn parse_matrix_call(pair: Pair<'_, Rule>) -> ast::ExprKind {
    let mut inner = pair.into_inner();
    let space = parse_ident(inner.next().expect("grammar: matrix space"));
    let rows =
        inner.next().expect("grammar: matrix rows").into_inner().map(parse_matrix_row).collect();
    ast::ExprKind::Matrix { space, rows }
}

fn parse_matrix_row(pair: Pair<'_, Rule>) -> ast::MatrixRow {
    let span = span_of(&pair);
    ast::MatrixRow { entries: pair.into_inner().map(parse_expr).collect(), span }
}

fn parse_ket_bra(pair: Pair<'_, Rule>) -> ast::ExprKind {
    let mut inner = pair.into_inner();
    let ket = parse_label(inner.next().expect("grammar: ket label"));
    let bra = parse_label(inner.next().expect("grammar: bra label"));
    ast::ExprKind::KetBra { ket, bra }
}

fn parse_label(pair: Pair<'_, Rule>) -> ast::Label {
    let span = span_of(&pair);
    let mut parts: Vec<Pair<'_, Rule>> = pair.into_inner().collect();
    let local = parts.pop().expect("grammar: label has a local part");
    let space_index = match parts.last() {
        Some(p) if p.as_rule() == Rule::index => parts.pop().map(parse_index),
        _ => None,
    };
    let space = parts.pop().map(parse_ident);
    let local = match local.as_rule() {
        Rule::signed => ast::LocalLabel::Number(local.as_str().to_string()),
        _ => ast::LocalLabel::Name(local.as_str().to_string()),
    };
    ast::Label { space, space_index, local, span }
}

/// Turns a pest error into a diagnostic that says, in words, what was expected and what was found.
///
/// Pest reports the grammar rules it tried at the failure point; with error detail on, it also
/// reports the literal tokens (`=`, `,`, `)`) tried at the furthest point, which is often further.
fn friendly(text: &str, err: pest::error::Error<Rule>) -> Diagnostic {
    let mut offset = match err.location {
        pest::error::InputLocation::Pos(pos) => pos,
        pest::error::InputLocation::Span((start, _)) => start,
    };
    let positives = match &err.variant {
        pest::error::ErrorVariant::ParsingError { positives, .. } => positives.clone(),
        pest::error::ErrorVariant::CustomError { .. } => {
            return Diagnostic::new(SyntaxError::TooComplex.to_string(), Span::new(offset, offset));
        }
    };
    let mut expected: Vec<String> = Vec::new();
    let push = |description: String, expected: &mut Vec<String>| {
        if !expected.contains(&description) {
            expected.push(description);
        }
    };
    let mut tokens = Vec::new();
    if let Some(attempts) = err.parse_attempts() {
        // Attempts that went further only inside one word (`1e` hoping for exponent digits)
        // say nothing useful; the rule-level position is the better one then.
        let skipped = text.get(offset..attempts.max_position).unwrap_or("");
        let named = attempts
            .expected_tokens()
            .iter()
            .any(|t| PUNCTUATION.contains(&t.to_string().as_str()));
        let inside_token =
            !named && skipped.chars().all(|c| c.is_alphanumeric() || c == '.' || c == '_');
        if attempts.max_position > offset && !inside_token {
            offset = attempts.max_position;
            tokens = attempts.expected_tokens();
        } else if attempts.max_position == offset {
            tokens = attempts.expected_tokens();
        }
    }
    if offset == error_offset(&err) {
        // An optional family index `[1..N]` is never what a user left out.
        for rule in positives.into_iter().filter(|r| *r != Rule::family) {
            push(describe(rule).to_string(), &mut expected);
        }
    }
    let wants_expression = expected.iter().any(|d| d == DESCRIPTIONS[2]);
    for token in tokens {
        // `ParsingToken` is not exported by pest; its `Display` is the literal itself.
        let token = token.to_string();
        {
            let starts_expression = matches!(token.as_str(), "(" | "-" | "|" | "matrix");
            if PUNCTUATION.contains(&token.as_str()) && !(wants_expression && starts_expression) {
                push(format!("`{token}`"), &mut expected);
            }
        }
    }
    // An opening bracket is worth naming only when nothing else could follow.
    if expected.len() > 1 {
        expected.retain(|d| d != "`(`" && d != "`[`");
    }
    if expected.iter().any(|d| d == DESCRIPTIONS[3]) {
        expected.retain(|d| d != "`>`");
    }
    if expected.iter().any(|d| d == DESCRIPTIONS[0]) {
        expected.retain(|d| d != DESCRIPTIONS[1]);
    }
    // Sort by a fixed precedence so the message does not depend on the order pest tried rules.
    expected.sort_by_key(|description| {
        DESCRIPTIONS.iter().position(|d| d == description).unwrap_or(DESCRIPTIONS.len())
    });
    let expected = match expected.as_slice() {
        [] => "something else".to_string(),
        [one] => one.clone(),
        [init @ .., last] => format!("{} or {last}", init.join(", ")),
    };
    let (found, len) = found_at(text, offset);
    Diagnostic::new(
        SyntaxError::Expected { expected, found }.to_string(),
        Span::new(offset, offset + len),
    )
}

fn error_offset(err: &pest::error::Error<Rule>) -> usize {
    match err.location {
        pest::error::InputLocation::Pos(pos) => pos,
        pest::error::InputLocation::Span((start, _)) => start,
    }
}

/// Literal tokens worth naming in an error message.
const PUNCTUATION: [&str; 10] = ["=", ",", "(", ")", "[", "]", "|", "<", ">", "0"];

/// Descriptions in the order they are listed in messages.
const DESCRIPTIONS: [&str; 11] = [
    "a statement",
    "a name",
    "an expression",
    "`> 0`",
    "a space kind (oscillator, ladder, spin, rotor, levels or fermions)",
    "a state label",
    "a matrix row `[...]`",
    "an operator",
    "end of line",
    "an index set like `1..N` or `[up, dn]`",
    "something else",
];

fn describe(rule: Rule) -> &'static str {
    match rule {
        Rule::kw_param
        | Rule::kw_space
        | Rule::kw_let
        | Rule::kw_focus
        | Rule::kw_order
        | Rule::param_decl
        | Rule::space_decl
        | Rule::let_decl
        | Rule::focus_decl
        | Rule::order_decl
        | Rule::kw_sector
        | Rule::sector_decl
        | Rule::kw_quantity
        | Rule::quantity_decl
        | Rule::term_def
        // Pest names the whole file when no statement could start at the beginning.
        | Rule::file => DESCRIPTIONS[0],
        Rule::ident => DESCRIPTIONS[1],
        Rule::expr
        | Rule::term
        | Rule::unary
        | Rule::power
        | Rule::neg
        | Rule::number
        | Rule::paren
        | Rule::call
        | Rule::member
        | Rule::matrix_call
        | Rule::sum_call
        | Rule::branch_energy
        | Rule::index
        | Rule::ket_bra
        | Rule::sector_item => DESCRIPTIONS[2],
        Rule::positive => DESCRIPTIONS[3],
        Rule::oscillator
        | Rule::spin
        | Rule::levels
        | Rule::ladder
        | Rule::rotor
        | Rule::fermions => DESCRIPTIONS[4],
        Rule::label | Rule::signed | Rule::state_ket | Rule::field => DESCRIPTIONS[5],
        Rule::matrix_rows | Rule::matrix_row => DESCRIPTIONS[6],
        Rule::add_op | Rule::mul_op | Rule::pow_op => DESCRIPTIONS[7],
        Rule::line_end | Rule::EOI => DESCRIPTIONS[8],
        Rule::range | Rule::name_set | Rule::family | Rule::binder => DESCRIPTIONS[9],
        _ => DESCRIPTIONS[10],
    }
}

/// What the text holds at `offset`, in words, and how many bytes of it to underline.
fn found_at(text: &str, offset: usize) -> (String, usize) {
    let rest = text.get(offset..).unwrap_or("");
    match rest.chars().next() {
        None => ("end of file".to_string(), 0),
        Some('\n' | '\r') => ("end of line".to_string(), 0),
        Some(c) if c.is_alphanumeric() || c == '_' => {
            let word: String = rest
                .chars()
                .take_while(|c| c.is_alphanumeric() || *c == '_' || *c == '.')
                .collect();
            let word = word.trim_end_matches('.').to_string();
            let len = word.len();
            (format!("`{word}`"), len)
        }
        Some(' ' | '\t') => ("a space".to_string(), 1),
        Some(c) => (format!("`{c}`"), c.len_utf8()),
    }
}
