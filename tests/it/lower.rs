//! Lowering: names, scalar/operator checks and exact values, through `cleave::load`.
//! Passing models are summarized entry by entry; failing ones snapshot their caret message.

use cleave::exact::{Field, Symbols};
use cleave::model::{Model, Operator};

use crate::assert_text_snapshot;
use crate::support::render_at;

/// Loads `text` and snapshots a summary: dimension, parameters, the non-zero entries of every
/// term by ket label, focus and order.
macro_rules! check_lower {
    ($text:expr) => {{
        let text: &str = $text;
        let (model, _) = match cleave::load(text) {
            Ok(res) => res,
            Err(d) => panic!("did not lower:\n{}", d.render(text, "model.clv")),
        };
        assert_text_snapshot!(summary(&model));
    }};
}

/// Loads `text`, which must fail at `line_col`, and snapshots the rendered error.
macro_rules! check_lower_error {
    ($line_col:expr, $text:expr) => {{
        let text: &str = $text;
        let diagnostic = cleave::load(text).expect_err("should not lower");
        assert_text_snapshot!(render_at(text, &diagnostic, $line_col));
    }};
}

fn summary(model: &Model) -> String {
    let names = model.param_names();
    let symbols = Symbols { names: &names };
    let label = |idx: usize| {
        let ket = model.basis().ket_label(idx);
        ket.trim_start_matches('|').trim_end_matches('>').to_string()
    };
    let entries = |op: &Operator| {
        let parts: Vec<String> = op
            .triplets()
            .map(|(r, c, v)| format!("<{}|{}> = {}", label(r), label(c), v.display(symbols)))
            .collect();
        if parts.is_empty() {
            "0".to_string()
        } else {
            parts.join("; ")
        }
    };
    let mut res =
        format!("dimension {}, params [{}]\n", model.basis().dimension(), names.join(", "));
    res.push_str(&format!("H0: {}\n", entries(model.h0())));
    for (k, v) in model.perturbations().iter().enumerate() {
        res.push_str(&format!("V{}: {}\n", k + 1, entries(v)));
    }
    for energies in model.focus() {
        let energies: Vec<String> =
            energies.iter().map(|e| e.display(symbols).to_string()).collect();
        res.push_str(&format!("focus: {}\n", energies.join(", ")));
    }
    if let Some(order) = model.order() {
        res.push_str(&format!("order: {order}\n"));
    }
    res
}

// --- passing models ----------------------------------------------------------------------

#[test]
fn oscillator_with_scalar_shift_and_position_squared() {
    check_lower!(
        r#"param g
space q = oscillator(3)
let x = (q.lower + q.raise) / sqrt(2)
H0 = q.n + 1/2
V = g * x^2
"#
    );
}

#[test]
fn spin_half_operators() {
    check_lower!(
        r#"space s = spin(1/2)
H0 = s.z
V = s.x + s.y
V2 = s.up * s.down
"#
    );
}

#[test]
fn levels_with_plain_and_qualified_ket_bras() {
    check_lower!(
        r#"param t
space d = levels(L, R, B)
H0 = 2 * |B><B|
V = t * (|L><R| + |d.R><d.L|)
"#
    );
}

#[test]
fn product_space_embeds_each_factor() {
    check_lower!(
        r#"space s = spin(1/2)
space q = oscillator(2)
H0 = s.z + q.n
V = |+1/2><-1/2| * |q.0><q.1| + adj(|+1/2><-1/2| * |q.0><q.1|)
"#
    );
}

#[test]
fn exact_decimals_and_powers() {
    check_lower!(
        r#"param g
H0 = 0.125 + 1e-3 + 2^-2
V = g^2 / 4 - -g
"#
    );
}

#[test]
fn matrix_on_one_factor() {
    check_lower!(
        r#"space a = levels(P, Q)
space d = levels(L, R)
H0 = matrix(d, [[1, i],
                [-i, 0]])
V = comm(matrix(a, [[0, 1], [1, 0]]), matrix(a, [[1, 0], [0, -1]])) * i
"#
    );
}

#[test]
fn focus_order_and_missing_middle_term() {
    check_lower!(
        r#"param delta
space d = levels(A, B)
H0 = delta * |B><B|
V = |A><B| + |B><A|
V3 = |A><A|
focus 0
focus 0, delta
order 4
"#
    );
}

#[test]
fn terms_can_be_used_after_their_definition() {
    check_lower!(
        r#"space s = spin(1)
H0 = s.z^2
V = comm(H0, s.x) * i
"#
    );
}

// --- errors ------------------------------------------------------------------------------

#[test]
fn unknown_name() {
    check_lower_error!("3:9", "param gamma\nH0 = 1\nV = 2 * gamme\n");
}

#[test]
fn unknown_member() {
    check_lower_error!("2:8", "space s = spin(1)\nH0 = s.w\nV = s.x\n");
}

#[test]
fn member_of_a_levels_space() {
    check_lower_error!("2:8", "space d = levels(A, B)\nH0 = d.z\nV = 1\n");
}

#[test]
fn spin_one_third() {
    check_lower_error!("1:16", "space s = spin(1/3)\nH0 = s.z\nV = s.x\n");
}

#[test]
fn oscillator_with_no_states() {
    check_lower_error!("1:22", "space q = oscillator(0)\nH0 = q.n\nV = q.n\n");
}

#[test]
fn ragged_matrix() {
    check_lower_error!("2:25", "space d = levels(A, B)\nH0 = matrix(d, [[1, 0], [0]])\nV = 1\n");
}

#[test]
fn matrix_of_wrong_size() {
    check_lower_error!(
        "2:6",
        "space d = levels(A, B, C)\nH0 = matrix(d, [[1, 0], [0, 1]])\nV = 1\n"
    );
}

#[test]
fn non_hermitian_v() {
    check_lower_error!("3:5", "space q = oscillator(3)\nH0 = q.n\nV = q.lower\n");
}

#[test]
fn non_hermitian_h0_names_product_states() {
    check_lower_error!("3:6", "param g\nspace d = levels(L, R)\nH0 = g * |L><R|\nV = 1\n");
}

#[test]
fn sqrt_of_negative_number() {
    check_lower_error!("1:11", "H0 = sqrt(-2)\nV = 1\n");
}

#[test]
fn sqrt_of_a_parameter() {
    check_lower_error!("2:11", "param g\nH0 = sqrt(g)\nV = 1\n");
}

#[test]
fn division_by_zero() {
    check_lower_error!("1:10", "H0 = 1 / (2 - 2)\nV = 1\n");
}

#[test]
fn division_by_a_symbolic_zero() {
    check_lower_error!("3:12", "param g\nspace s = spin(1/2)\nH0 = s.z / (g - g)\nV = 1\n");
}

#[test]
fn zero_to_a_negative_power() {
    check_lower_error!("1:6", "H0 = 0^-1\nV = 1\n");
}

#[test]
fn division_by_an_operator() {
    check_lower_error!("2:10", "space s = spin(1/2)\nH0 = 1 / s.z\nV = 1\n");
}

#[test]
fn negative_power_of_an_operator() {
    check_lower_error!("2:10", "space s = spin(1/2)\nH0 = s.z^-1\nV = 1\n");
}

#[test]
fn fractional_power_of_an_operator() {
    check_lower_error!("2:10", "space s = spin(1/2)\nH0 = s.z^(1/2)\nV = 1\n");
}

#[test]
fn operator_as_exponent() {
    check_lower_error!("2:8", "space s = spin(1/2)\nH0 = 2^s.z\nV = 1\n");
}

#[test]
fn symbolic_exponent() {
    check_lower_error!("2:8", "param g\nH0 = 2^g\nV = 1\n");
}

#[test]
fn name_declared_twice() {
    check_lower_error!("2:7", "param g\nspace g = spin(1)\nH0 = 1\nV = 1\n");
}

#[test]
fn v_and_v1_are_one_term() {
    check_lower_error!("3:1", "H0 = 1\nV = 1\nV1 = 2\n");
}

#[test]
fn reserved_name_i() {
    check_lower_error!("1:7", "param i\nH0 = 1\nV = 1\n");
}

#[test]
fn ambiguous_ket_label() {
    check_lower_error!(
        "3:6",
        "space a = levels(L, R)\nspace b = levels(L, R)\nV = |L><R|\nH0 = 1\n"
    );
}

#[test]
fn unknown_ket_label() {
    check_lower_error!("2:9", "space d = levels(L, R)\nV = |L><X|\nH0 = 1\n");
}

#[test]
fn ket_and_bra_on_different_spaces() {
    check_lower_error!("3:6", "space a = levels(L)\nspace b = levels(R)\nV = |L><R|\nH0 = 1\n");
}

#[test]
fn spin_label_out_of_range() {
    check_lower_error!("2:6", "space s = spin(1/2)\nV = |+3/2><1/2|\nH0 = 1\n");
}

#[test]
fn missing_h0() {
    check_lower_error!("3:1", "space s = spin(1/2)\nV = s.x\n");
}

#[test]
fn missing_v() {
    check_lower_error!("3:1", "space s = spin(1/2)\nH0 = s.z\n");
}

#[test]
fn product_space_too_large() {
    check_lower_error!(
        "2:11",
        "space a = oscillator(200)\nspace b = oscillator(101)\nH0 = 1\nV = 1\n"
    );
}

#[test]
fn focus_energy_must_be_a_scalar() {
    check_lower_error!("4:7", "space s = spin(1/2)\nH0 = s.z\nV = s.x\nfocus s.z\n");
}

#[test]
fn space_used_as_a_value() {
    check_lower_error!("2:6", "space s = spin(1/2)\nH0 = s\nV = 1\n");
}

#[test]
fn scalar_used_as_a_space() {
    check_lower_error!("2:6", "param g\nH0 = g.x\nV = 1\n");
}

#[test]
fn matrix_entry_must_be_a_scalar() {
    check_lower_error!("2:18", "space s = spin(1/2)\nH0 = matrix(s, [[s.z, 0], [0, 1]])\nV = 1\n");
}

#[test]
fn assignment_to_an_unknown_term() {
    check_lower_error!("1:1", "W = 1\nH0 = 1\nV = 1\n");
}

#[test]
fn unknown_function() {
    check_lower_error!("1:6", "H0 = exp(1)\nV = 1\n");
}

#[test]
fn wrong_number_of_arguments() {
    check_lower_error!("2:6", "space s = spin(1)\nH0 = comm(s.x)\nV = 1\n");
}

#[test]
fn order_must_be_a_whole_number() {
    check_lower_error!("3:7", "H0 = 1\nV = 1\norder 3/2\n");
}

#[test]
fn number_literal_too_large() {
    check_lower_error!("1:6", "H0 = 1e99999\nV = 1\n");
}

// --- the scalar reader -------------------------------------------------------------------

#[test]
fn eval_scalar_reads_parameters_and_radicals() {
    let params = vec!["g".to_string(), "t".to_string()];
    let value = cleave::lower::eval_scalar("-21/8*g^2 + sqrt(2)*t/3 - i", &params).expect("reads");
    let again =
        cleave::lower::eval_scalar(&value.display(Symbols { names: &params }).to_string(), &params)
            .expect("reads its own output");
    assert_eq!(value, again);
    assert!(!value.is_zero());
}

#[test]
fn parse_rational_reads_decimals() {
    let value = cleave::lower::parse_rational("0.125").expect("reads");
    assert_eq!(value, cleave::exact::Rational::ratio(1, 8).expect("8 != 0"));
    let err = cleave::lower::parse_rational("sqrt(2)").expect_err("not rational");
    assert_eq!(err.message, "expected a rational number");
}

#[test]
fn every_example_model_loads() {
    let dir = concat!(env!("CARGO_MANIFEST_DIR"), "/examples");
    let mut paths: Vec<_> = std::fs::read_dir(dir)
        .expect("examples/ exists")
        .map(|entry| entry.expect("a directory entry").path())
        .filter(|path| path.extension().is_some_and(|ext| ext == "clv"))
        .collect();
    paths.sort();
    assert!(paths.len() >= 5, "{paths:?}");
    for path in paths {
        let text = std::fs::read_to_string(&path).expect("readable");
        if let Err(d) = cleave::load(&text) {
            panic!("{}", d.render(&text, &path.display().to_string()));
        }
    }
}

/// Loads `text` and asserts it is refused at `line_col` with `expected` in the message.
fn check_refused(text: &str, line_col: &str, expected: &str) {
    let diagnostic = cleave::load(text).expect_err("refused");
    let rendered = crate::support::render_at(text, &diagnostic, line_col);
    assert!(rendered.contains(expected), "expected {expected:?} in\n{rendered}");
}

/// Issue 12, items 1 and 4: values are bounded in bits and terms by any route (powers, chains of
/// `let` products, operator powers, literals) and refused before they are computed.
#[test]
fn issue_12_value_size_limits() {
    let too_large = "this value is too large";
    check_refused(
        "param g, t\nspace q = oscillator(3)\nH0 = q.n\nV = (g+t+1)^300 * (q.lower+q.raise)\n",
        "4:5",
        too_large,
    );
    check_refused(
        "space q = oscillator(3)\nH0 = q.n\nV = (7^1000)^1000 * (q.lower+q.raise)\n",
        "3:5",
        too_large,
    );
    // The chain starts from a 476-bit coefficient, so that the test stays quick; the limit
    // stops it at the fourth squaring.
    let mut chain = String::from("param g\nspace q = oscillator(3)\nlet x0 = 3^300*g + 1\n");
    for k in 1..60 {
        chain.push_str(&format!("let x{k} = x{} * x{}\n", k - 1, k - 1));
    }
    chain.push_str("H0 = q.n\nV = x59 * (q.lower+q.raise)\n");
    check_refused(&chain, "7:10", too_large);
    check_refused(
        "param g\nspace q = oscillator(3)\nH0 = q.n\nV = (g*(q.lower+q.raise)+7^300)^1000\n",
        "4:5",
        too_large,
    );
    let literal = format!("space q = oscillator(3)\nH0 = q.n\nV = {} * q.n\n", "7".repeat(100_000));
    check_refused(&literal, "3:5", "number too large (at most 1000 characters");
    // Within the limits: 7^1000 (2808 bits) and a 64th power of a binomial.
    assert!(cleave::load(
        "param g\nspace q = oscillator(3)\nH0 = q.n\nV = 7^1000 * (g+1)^64 * q.n\n"
    )
    .is_ok());
}

/// Issue 12, item 11: parameters may not take the names the outputs use for the expansion
/// parameter (`lambda`) and the secular variable (`x`).
#[test]
fn issue_12_reserved_parameter_names() {
    let model =
        |name: &str| format!("param {name}\nspace q = oscillator(3)\nH0 = q.n\nV = {name} * q.n\n");
    check_refused(&model("lambda"), "1:7", "`lambda` is a reserved name");
    check_refused(&model("x"), "1:7", "`x` is the variable of the secular equations");
    assert!(cleave::load(&model("lam")).is_ok());
}
