//! Parameters fixed before deriving (`--set`, `Model::substitute`): the result must be the
//! symbolic one evaluated at the same values, and the outputs must say what was fixed.

use std::process::Command;

use cleave::engine::{self, Derivation, DeriveOptions};
use cleave::exact::{ParamId, Radical, RatFunc, Rational};

type Branches = Vec<Vec<(Vec<RatFunc>, usize, Option<u32>)>>;

/// The branches of `derivation` with every coefficient evaluated at those of `values` that name
/// one of its parameters.
fn evaluated(derivation: &Derivation, values: &[(&str, Rational)]) -> Branches {
    let at = |x: &RatFunc| {
        let mut res = x.clone();
        for (name, value) in values {
            let Some(k) = derivation.parameters.iter().position(|p| p == name) else {
                continue;
            };
            res = res
                .eval_param(ParamId(k as u32), &Radical::from(value.clone()))
                .expect("no pole at the chosen values");
        }
        res
    };
    derivation
        .model_spaces
        .iter()
        .map(|space| {
            space
                .branches
                .iter()
                .map(|b| (b.energy.iter().map(at).collect(), b.multiplicity, b.split_at))
                .collect()
        })
        .collect()
}

/// Derives `text` to `order` symbolically and with `values` put in first, and checks that every
/// model space has the same branches (energies, multiplicities, `split_at`) up to their order,
/// comparing exact values after putting `rest` in for the parameters left free.
fn check_substitution(
    text: &str,
    order: u32,
    values: &[(&str, Rational)],
    rest: &[(&str, Rational)],
) {
    let (model, _) = cleave::load(text).expect("a valid model");
    let options = DeriveOptions::new(order);
    let symbolic = engine::derive(&model, &options).expect("derivable");
    let owned: Vec<(String, Rational)> =
        values.iter().map(|(n, v)| (n.to_string(), v.clone())).collect();
    let fixed_model = model.substitute(&owned).expect("valid values");
    assert_eq!(fixed_model.fixed().len(), values.len());
    let fixed = engine::derive(&fixed_model, &options).expect("derivable");
    assert_eq!(fixed.parameters.len(), symbolic.parameters.len() - values.len());
    let all: Vec<(&str, Rational)> = values.iter().chain(rest).cloned().collect();
    let expected = evaluated(&symbolic, &all);
    let got = evaluated(&fixed, rest);
    assert_eq!(expected.len(), got.len(), "number of model spaces");
    for (space, (want, have)) in expected.iter().zip(&got).enumerate() {
        assert_eq!(want.len(), have.len(), "branches of model space {}", space + 1);
        for branch in have {
            assert!(
                want.contains(branch),
                "model space {}: branch {branch:?} is not among the evaluated symbolic ones {want:?}",
                space + 1
            );
        }
    }
}

fn q(numer: i64, denom: i64) -> Rational {
    Rational::ratio(numer, denom).expect("nonzero denominator")
}

fn example(name: &str) -> String {
    let path = format!("{}/examples/{name}.clv", env!("CARGO_MANIFEST_DIR"));
    std::fs::read_to_string(path).expect("the example exists")
}

#[test]
fn set_on_qubit_resonator_equals_symbolic_evaluated() {
    check_substitution(
        &example("qubit_resonator"),
        4,
        &[("w", q(5, 1)), ("delta", q(1, 2)), ("g", q(1, 3))],
        &[],
    );
}

#[test]
fn set_of_some_parameters_keeps_the_others_symbolic() {
    check_substitution(
        &example("qubit_resonator"),
        4,
        &[("w", q(5, 1)), ("delta", q(7, 10))],
        &[("g", q(2, 9))],
    );
    check_substitution(&example("spin_orbit_field"), 3, &[("xi", q(7, 3))], &[("h", q(-1, 4))]);
}

#[test]
fn set_on_hubbard_and_spin_examples() {
    check_substitution(&example("hubbard_dimer"), 4, &[("t", q(1, 7)), ("U", q(3, 1))], &[]);
    check_substitution(&example("axial_spin"), 4, &[("D", q(2, 1)), ("b", q(-1, 5))], &[]);
    check_substitution(&example("spin_one_axial"), 4, &[("B", q(3, 4))], &[("D", q(5, 2))]);
    check_substitution(&example("spin_orbit_field"), 3, &[("xi", q(2, 1)), ("h", q(1, 3))], &[]);
    check_substitution(&example("hubbard_triangle"), 3, &[("U", q(4, 1))], &[("t", q(1, 3))]);
}

#[test]
fn substitute_rejects_bad_values() {
    let (model, _) = cleave::load(&example("qubit_resonator")).expect("a valid model");
    let err = |values: Vec<(&str, Rational)>| {
        let owned: Vec<(String, Rational)> =
            values.into_iter().map(|(n, v)| (n.to_string(), v)).collect();
        model.substitute(&owned).expect_err("bad values").to_string()
    };
    assert_eq!(err(vec![("x", q(1, 1))]), "the model has no parameter `x` (it has: w, delta, g)");
    assert_eq!(err(vec![("w", q(-1, 1))]), "`w` is declared `> 0`, so its value must be positive");
    assert_eq!(err(vec![("g", q(1, 1)), ("g", q(2, 1))]), "`g` is given twice");
    let (model, _) = cleave::load("param a, b\nspace s = spin(1/2)\nH0 = s.z\nV = b / a * s.x\n")
        .expect("a valid model");
    let err = model.substitute(&[("a".to_string(), q(0, 1))]).expect_err("a pole");
    assert_eq!(err.to_string(), "this value of `a` makes a denominator in the model vanish");
}

/// Runs the binary on an example; returns the exit status, stdout and stderr.
fn run(args: &[&str]) -> (i32, String, String) {
    let output = Command::new(env!("CARGO_BIN_EXE_cleave"))
        .args(args)
        .current_dir(env!("CARGO_MANIFEST_DIR"))
        .output()
        .expect("run cleave");
    (
        output.status.code().unwrap_or(-1),
        String::from_utf8_lossy(&output.stdout).into_owned(),
        String::from_utf8_lossy(&output.stderr).into_owned(),
    )
}

#[test]
fn set_is_reported_in_the_report_and_the_json() {
    let model = "examples/qubit_resonator.clv";
    let (status, stdout, stderr) = run(&["derive", model, "--set", "w=5", "--set", "delta=0.5"]);
    assert_eq!(status, 0, "{stderr}");
    assert!(stdout.contains("fixed: w = 5, delta = 1/2 (--set)"), "{stdout}");
    assert!(stdout.contains("parameters g;"), "{stdout}");
    let (status, json, stderr) = run(&["derive", model, "--set", "delta=1/2", "--json", "-"]);
    assert_eq!(status, 0, "{stderr}");
    let doc: serde_json::Value = serde_json::from_str(&json).expect("valid JSON");
    assert_eq!(doc["parameters"], serde_json::json!(["w", "g"]));
    assert_eq!(doc["fixed"], serde_json::json!({"delta": "1/2"}));
    // Without --set the field is absent, so existing consumers see no change.
    let (_, json, _) = run(&["derive", model, "--json", "-"]);
    assert!(!json.contains("\"fixed\""));
    let (_, latex, _) = run(&["derive", model, "--set", "delta=1/2", "--latex", "-"]);
    assert!(latex.contains("Parameters: $w$, $g$. Fixed before deriving: $\\delta = 1/2$."));
    let (_, rust, _) = run(&["derive", model, "--set", "delta=1/2", "--set", "w=3", "--rust", "-"]);
    assert!(rust.contains("// Fixed before deriving: `w = 3`, `delta = 1/2`.\n"), "{rust}");
    let (status, levels, stderr) = run(&["levels", model, "--set", "w=2", "--json", "-"]);
    assert_eq!(status, 0, "{stderr}");
    assert!(levels.contains("\"fixed\": {\n    \"w\": \"2\""), "{levels}");
}

#[test]
fn set_errors_are_bad_input() {
    let model = "examples/qubit_resonator.clv";
    for (args, expected) in [
        (vec!["derive", model, "--set", "w"], "error: --set w: expected NAME=VALUE"),
        (vec!["derive", model, "--set", "x=1"], "--set x=1: the model has no parameter `x`"),
        (vec!["check", model, "--set", "w=-2"], "--set w=-2: `w` is declared `> 0`"),
        (vec!["levels", model, "--set", "w=sqrt(2)"], "--set w=sqrt(2): expected a rational"),
    ] {
        let (status, _, stderr) = run(&args);
        assert_eq!(status, 2, "{args:?}: {stderr}");
        assert!(stderr.contains(expected), "{args:?}: expected {expected:?} in {stderr}");
    }
}
