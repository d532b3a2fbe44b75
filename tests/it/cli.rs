//! The binary: exit statuses and stderr for bad input, run on models in a temporary directory.

use std::process::Command;

/// Runs `cleave` with `args` in a fresh temp dir holding `model.clv` = `model`; returns the exit
/// status, stdout and stderr.
fn run_cleave(model: &str, args: &[&str]) -> (i32, String, String) {
    let dir = tempfile::tempdir().expect("a temp dir");
    std::fs::write(dir.path().join("model.clv"), model).expect("write the model");
    let output = Command::new(env!("CARGO_BIN_EXE_cleave"))
        .args(args)
        .current_dir(dir.path())
        .output()
        .expect("run cleave");
    let stdout = String::from_utf8_lossy(&output.stdout).into_owned();
    let stderr = String::from_utf8_lossy(&output.stderr).into_owned();
    (output.status.code().unwrap_or(-1), stdout, stderr)
}

/// Runs `cleave ARGS` and checks exit status 2 with `expected` in stderr.
fn check_bad_input(model: &str, args: &[&str], expected: &str) {
    let (status, _, stderr) = run_cleave(model, args);
    assert_eq!(status, 2, "stderr:\n{stderr}");
    assert!(stderr.contains(expected), "expected {expected:?} in stderr:\n{stderr}");
}

const GOOD: &str = r#"param g
space s = spin(1/2)
H0 = s.z
V = g * s.x
"#;

#[test]
fn syntax_error_is_located_with_a_caret() {
    check_bad_input(
        "H0 = (1 +\nV = 1\n",
        &["derive", "model.clv"],
        "model.clv:1:6: unclosed bracket `(`\n  |\n1 | H0 = (1 +\n  |      ^\n",
    );
}

#[test]
fn lowering_error_is_located_for_every_command() {
    let model = "space s = spin(1/2)\nH0 = s.w\nV = s.x\n";
    for command in ["levels", "derive", "check"] {
        check_bad_input(
            model,
            &[command, "model.clv"],
            "model.clv:2:8: space `s` has no operator `w`",
        );
    }
}

#[test]
fn non_hermitian_v_is_bad_input() {
    check_bad_input(
        "space q = oscillator(3)\nH0 = q.n\nV = q.lower\n",
        &["levels", "model.clv"],
        "model.clv:3:5: V is not Hermitian: <0|V|1> = 1 but conj(<1|V|0>) = 0",
    );
}

#[test]
fn unreadable_model_file() {
    check_bad_input(GOOD, &["derive", "missing.clv"], "missing.clv: cannot read the model");
}

#[test]
fn at_with_unknown_parameter() {
    check_bad_input(GOOD, &["derive", "model.clv", "--at", "h=1"], "no parameter `h`");
}

#[test]
fn at_without_equals() {
    check_bad_input(GOOD, &["check", "model.clv", "--at", "g"], "expected NAME=VALUE");
}

#[test]
fn at_with_non_rational_value() {
    check_bad_input(
        GOOD,
        &["derive", "model.clv", "--at", "g=sqrt(2)"],
        "expected a rational number",
    );
}

#[test]
fn at_must_respect_positivity() {
    let model = "param U > 0\nspace s = spin(1/2)\nH0 = U * s.z\nV = s.x\n";
    check_bad_input(model, &["check", "model.clv", "--at", "U=-1"], "`U` is declared positive");
}

#[test]
fn unknown_subcommand_is_bad_input() {
    check_bad_input(GOOD, &["frobnicate"], "unrecognized subcommand");
}

#[test]
fn standalone_needs_latex() {
    check_bad_input(GOOD, &["derive", "model.clv", "--standalone"], "--latex");
}

#[test]
fn help_succeeds() {
    let (status, stdout, _) = run_cleave(GOOD, &["--help"]);
    assert_eq!(status, 0);
    for command in ["levels", "derive", "check"] {
        assert!(stdout.contains(command), "{stdout}");
    }
}

/// A square root of a product beyond 64 bits is exact on the command line too (it used to be an
/// error located at line 1, column 1).
#[test]
fn square_root_products_beyond_64_bits_derive() {
    let model = "space s = spin(1/2)\nH0 = s.z\nV = sqrt(4294967311) * sqrt(4294967357) * s.z\n";
    let (status, stdout, stderr) = run_cleave(model, &["derive", "model.clv", "--order", "1"]);
    assert_eq!(status, 0, "stderr:\n{stderr}");
    assert!(stdout.contains("1/2*sqrt(18446744400127067027)"), "{stdout}");
}
