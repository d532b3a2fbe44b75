//! The grammar: each rule with passing cases (checked against a fully parenthesized rendering of
//! the tree) and failing cases (snapshotted with their caret message).

use cleave::syntax::{self, ast};

use crate::assert_text_snapshot;
use crate::support::render_at;

/// Parses `text` and compares each statement, rendered as an s-expression, with `expected`
/// (one statement per line).
fn check_parse(text: &str, expected: &str) {
    let file = match syntax::parse(text) {
        Ok(file) => file,
        Err(d) => panic!("did not parse:\n{}", d.render(text, "model.clv")),
    };
    let rendered: Vec<String> = file.statements.iter().map(statement).collect();
    assert_eq!(rendered.join("\n"), expected.trim_end());
}

/// Parses `text`, which must fail at `line_col`, and snapshots the rendered error.
macro_rules! check_syntax_error {
    ($line_col:expr, $text:expr) => {{
        let text: &str = $text;
        let diagnostic = syntax::parse(text).expect_err("should not parse");
        assert_text_snapshot!(render_at(text, &diagnostic, $line_col));
    }};
}

fn statement(statement: &ast::Statement) -> String {
    match statement {
        ast::Statement::Param(decl) => {
            let items: Vec<String> = decl
                .items
                .iter()
                .map(
                    |i| if i.positive { format!("{}>0", i.name.name) } else { i.name.name.clone() },
                )
                .collect();
            format!("(param {})", items.join(" "))
        }
        ast::Statement::Space(decl) => {
            let kind = match &decl.kind {
                ast::SpaceKind::Oscillator { n_states, .. } => {
                    format!("(oscillator {})", expr(n_states))
                }
                ast::SpaceKind::Spin { j, .. } => format!("(spin {})", expr(j)),
                ast::SpaceKind::Levels { labels, .. } => {
                    let labels: Vec<&str> = labels.iter().map(|l| l.name.as_str()).collect();
                    format!("(levels {})", labels.join(" "))
                }
                ast::SpaceKind::Ladder { n_states, .. } => format!("(ladder {})", expr(n_states)),
                ast::SpaceKind::Rotor { j_max, .. } => format!("(rotor {})", expr(j_max)),
                ast::SpaceKind::Fermions { index_sets, .. } => {
                    let sets: Vec<String> = index_sets.iter().map(index_set).collect();
                    format!("(fermions {})", sets.join(" "))
                }
            };
            match &decl.family {
                Some(sets) => {
                    let sets: Vec<String> = sets.iter().map(index_set).collect();
                    format!("(space {}[{}] {kind})", decl.name.name, sets.join(" "))
                }
                None => format!("(space {} {kind})", decl.name.name),
            }
        }
        ast::Statement::Let(decl) => format!("(let {} {})", decl.name.name, expr(&decl.value)),
        ast::Statement::Term(def) => format!("(= {} {})", def.name.name, expr(&def.value)),
        ast::Statement::Focus(decl) => {
            let items: Vec<String> = decl
                .items
                .iter()
                .map(|item| match item {
                    ast::FocusItem::Energy(e) => expr(e),
                    ast::FocusItem::State(ket) => {
                        let fields: Vec<&str> =
                            ket.fields.iter().map(|(f, _)| f.as_str()).collect();
                        format!("|{}>", fields.join(","))
                    }
                })
                .collect();
            match &decl.target {
                Some(target) => format!("(focus {} as {})", items.join(" "), target.name),
                None => format!("(focus {})", items.join(" ")),
            }
        }
        ast::Statement::Order(decl) => format!("(order {})", expr(&decl.order)),
        ast::Statement::Quantity(decl) => {
            format!("(quantity {} {})", decl.name.name, expr(&decl.value))
        }
        ast::Statement::Sector(decl) => {
            let items: Vec<String> = decl
                .items
                .iter()
                .map(|item| format!("(= {} {})", expr(&item.operator), expr(&item.value)))
                .collect();
            format!("(sector {})", items.join(" "))
        }
    }
}

fn index_set(set: &ast::IndexSetExpr) -> String {
    match set {
        ast::IndexSetExpr::Range { first, last, .. } => format!("{}..{}", expr(first), expr(last)),
        ast::IndexSetExpr::Names { names, .. } => {
            let names: Vec<&str> = names.iter().map(|n| n.name.as_str()).collect();
            format!("[{}]", names.join(" "))
        }
    }
}

fn index(values: &[ast::Expr]) -> String {
    let values: Vec<String> = values.iter().map(expr).collect();
    format!("[{}]", values.join(" "))
}

fn label(label: &ast::Label) -> String {
    let local = match &label.local {
        ast::LocalLabel::Name(text) | ast::LocalLabel::Number(text) => text.as_str(),
    };
    let qualifier = label.space_index.as_deref().map(index).unwrap_or_default();
    match &label.space {
        Some(space) => format!("{}{qualifier}.{local}", space.name),
        None => local.to_string(),
    }
}

fn expr(e: &ast::Expr) -> String {
    match &e.kind {
        ast::ExprKind::Number(text) | ast::ExprKind::Name(text) => text.clone(),
        ast::ExprKind::Member { space, index: idx, member } => {
            let idx = idx.as_deref().map(index).unwrap_or_default();
            format!("{}{idx}.{}", space.name, member.name)
        }
        ast::ExprKind::BranchEnergy(ket) => {
            let fields: Vec<&str> = ket.fields.iter().map(|(f, _)| f.as_str()).collect();
            format!("E|{}>", fields.join(","))
        }
        ast::ExprKind::Sum { binders, body } => {
            let binders: Vec<String> =
                binders.iter().map(|b| format!("{} {}", b.name.name, index_set(&b.set))).collect();
            format!("(sum {} {})", binders.join(" "), expr(body))
        }
        ast::ExprKind::KetBra { ket, bra } => format!("|{}><{}|", label(ket), label(bra)),
        ast::ExprKind::Call { function, args } => {
            let args: Vec<String> = args.iter().map(expr).collect();
            format!("({} {})", function.name, args.join(" "))
        }
        ast::ExprKind::Matrix { space, rows } => {
            let rows: Vec<String> = rows
                .iter()
                .map(|r| format!("[{}]", r.entries.iter().map(expr).collect::<Vec<_>>().join(" ")))
                .collect();
            format!("(matrix {} {})", space.name, rows.join(" "))
        }
        ast::ExprKind::Neg(operand) => format!("(- {})", expr(operand)),
        ast::ExprKind::Binary { op, lhs, rhs } => {
            format!("({} {} {})", op.symbol(), expr(lhs), expr(rhs))
        }
    }
}

// --- file: statements, blank lines and comments --------------------------------------------

#[test]
fn file_with_blank_lines_and_comments() {
    check_parse(
        r#"
# a comment line

param g   # trailing comment
H0 = 1
"#,
        "(param g)\n(= H0 1)",
    );
}

#[test]
fn file_without_final_newline_and_crlf() {
    check_parse("param g\r\nV = g", "(param g)\n(= V g)");
}

#[test]
fn empty_file_parses() {
    check_parse("", "");
}

#[test]
fn two_statements_on_one_line_fail() {
    check_syntax_error!("1:9", "param g H0 = 1\n");
}

// --- declarations ----------------------------------------------------------------------

#[test]
fn param_decl() {
    check_parse("param g, t\nparam U > 0, W\n", "(param g t)\n(param U>0 W)");
}

#[test]
fn param_decl_needs_zero_after_greater() {
    check_syntax_error!("1:11", "param U > 1\n");
}

#[test]
fn param_decl_keyword_needs_a_boundary() {
    // `paramg = 1` is an assignment to a name `paramg`, not `param g`.
    check_parse("paramg = 1", "(= paramg 1)");
}

#[test]
fn space_decl() {
    check_parse(
        "space q = oscillator(40)\nspace s = spin(3/2)\nspace d = levels(L, R, B)\n",
        "(space q (oscillator 40))\n(space s (spin (/ 3 2)))\n(space d (levels L R B))",
    );
}

#[test]
fn space_decl_missing_equals() {
    check_syntax_error!("1:9", "space q oscillator(3)\n");
}

#[test]
fn space_decl_unknown_kind() {
    check_syntax_error!("1:11", "space s = spn(1)\n");
}

#[test]
fn let_decl() {
    check_parse(
        "let x = (q.lower + q.raise) / sqrt(2)",
        "(let x (/ (+ q.lower q.raise) (sqrt 2)))",
    );
}

#[test]
fn let_decl_needs_a_name() {
    check_syntax_error!("1:5", "let = 2\n");
}

#[test]
fn term_def() {
    check_parse("H0 = q.n + 1/2\nV = g\nV2 = t", "(= H0 (+ q.n (/ 1 2)))\n(= V g)\n(= V2 t)");
}

#[test]
fn term_def_without_value() {
    check_syntax_error!("1:4", "V =\n");
}

#[test]
fn focus_decl() {
    check_parse("focus 0\nfocus 0, delta", "(focus 0)\n(focus 0 delta)");
}

#[test]
fn focus_decl_needs_an_energy() {
    check_syntax_error!("1:6", "focus\n");
}

#[test]
fn order_decl() {
    check_parse("order 4", "(order 4)");
}

// --- scalars and operators -------------------------------------------------------------

#[test]
fn numbers() {
    check_parse("V = 0.125 + 1e-3 + 2.5E2 + 7", "(= V (+ (+ (+ 0.125 1e-3) 2.5E2) 7))");
}

#[test]
fn number_with_two_dots_fails() {
    check_syntax_error!("1:6", "V = 2..3\n");
}

#[test]
fn precedence_of_sum_product_power() {
    check_parse("V = a + b * c ^ 2 - d / e", "(= V (- (+ a (* b (^ c 2))) (/ d e)))");
}

#[test]
fn unary_minus_binds_looser_than_power() {
    check_parse("V = -x^2", "(= V (- (^ x 2)))");
}

#[test]
fn power_is_right_associative_and_takes_signed_exponents() {
    check_parse("V = 2^3^2 + 2^-x^2", "(= V (+ (^ 2 (^ 3 2)) (^ 2 (- (^ x 2)))))");
}

#[test]
fn double_minus() {
    check_parse("V = --a - -b", "(= V (- (- (- a)) (- b)))");
}

#[test]
fn missing_operand_after_operator() {
    check_syntax_error!("1:8", "V = 3 +\n");
}

#[test]
fn juxtaposition_is_not_multiplication() {
    check_syntax_error!("1:7", "V = 2 g\n");
}

#[test]
fn members() {
    check_parse("V = s.x + s.up * q.lower", "(= V (+ s.x (* s.up q.lower)))");
}

#[test]
fn member_needs_a_name_after_the_dot() {
    check_syntax_error!("1:7", "V = q.\n");
}

#[test]
fn calls() {
    check_parse("V = adj(A) + comm(A, B) + sqrt(2)", "(= V (+ (+ (adj A) (comm A B)) (sqrt 2)))");
}

#[test]
fn call_without_arguments() {
    check_syntax_error!("1:10", "V = sqrt()\n");
}

#[test]
fn matrix_literal() {
    check_parse("V = matrix(d, [[0, 1], [1, 0]])", "(= V (matrix d [0 1] [1 0]))");
}

#[test]
fn matrix_literal_over_several_lines() {
    check_parse(
        r#"V = matrix(d, [[0, 1],   # first row
               [1, 0]])
H0 = 1
"#,
        "(= V (matrix d [0 1] [1 0]))\n(= H0 1)",
    );
}

#[test]
fn matrix_literal_needs_rows() {
    check_syntax_error!("1:16", "V = matrix(d, [1, 2])\n");
}

#[test]
fn ket_bras() {
    check_parse(
        "V = |L><R| + |d.L><d.R| + |+1/2><-1/2| + |0><1| + | s.-3/2 > < 1/2 |",
        "(= V (+ (+ (+ (+ |L><R| |d.L><d.R|) |+1/2><-1/2|) |0><1|) |s.-3/2><1/2|))",
    );
}

#[test]
fn ket_bra_without_bra_label() {
    check_syntax_error!("1:9", "V = |L><\n");
}

// --- brackets and limits ---------------------------------------------------------------

#[test]
fn unclosed_bracket() {
    check_syntax_error!("1:6", "H0 = (q.n + 1\nV = q.x\n");
}

#[test]
fn unclosed_bracket_at_end_of_file() {
    check_syntax_error!("1:15", "V = matrix(d, [[0, 1], [1, 0]\n");
}

#[test]
fn stray_closing_bracket() {
    check_syntax_error!("1:7", "V = a ) (\n");
}

#[test]
fn mismatched_bracket() {
    check_syntax_error!("1:11", "V = (a + b]\n");
}

#[test]
fn nesting_too_deep() {
    let text = format!("V = {}1{}\n", "(".repeat(40), ")".repeat(40));
    check_syntax_error!("1:37", &text);
}

#[test]
fn too_many_operators() {
    let text = format!("V = 1{}\n", "+1".repeat(300));
    check_syntax_error!("1:518", &text);
}

#[test]
fn stray_token_at_line_start() {
    check_syntax_error!("1:1", "= 2\n");
}

#[test]
fn stray_character_in_expression() {
    check_syntax_error!("1:9", "V = 1 + @\n");
}

#[test]
fn error_column_counts_characters() {
    // `µ` is two bytes but one column; the caret must still sit under `)`.
    check_syntax_error!("1:7", "V = µ )\n");
}

#[test]
fn scalar_input() {
    let parsed = syntax::parse_expr("-21/8*g^2").expect("parses");
    // Unary minus binds tighter than `*` and `/` (but looser than `^`).
    assert_eq!(expr(&parsed), "(* (/ (- 21) 8) (^ g 2))");
}
