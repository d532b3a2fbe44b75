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

/// Runs `cleave ARGS` in `dir` with stdout sent to `stdout`; returns status, stdout, stderr.
fn run_in(dir: &std::path::Path, args: &[&str], stdout: std::process::Stdio) -> (i32, String) {
    let output = Command::new(env!("CARGO_BIN_EXE_cleave"))
        .args(args)
        .current_dir(dir)
        .stdout(stdout)
        .output()
        .expect("run cleave");
    (output.status.code().unwrap_or(-1), String::from_utf8_lossy(&output.stderr).into_owned())
}

fn dir_with_model(model: &str) -> tempfile::TempDir {
    let dir = tempfile::tempdir().expect("a temp dir");
    std::fs::write(dir.path().join("model.clv"), model).expect("write the model");
    dir
}

/// The names in `dir`, sorted (temporary files would show here).
fn listing(dir: &std::path::Path) -> Vec<String> {
    let mut names: Vec<String> = std::fs::read_dir(dir)
        .expect("list")
        .map(|e| e.expect("entry").file_name().to_string_lossy().into_owned())
        .collect();
    names.sort();
    names
}

/// Issue 12, item 8: one unwritable output means no output is written or changed.
#[test]
fn issue_12_outputs_all_or_nothing() {
    let dir = dir_with_model(GOOD);
    std::fs::write(dir.path().join("a.json"), "old").expect("write");
    let args =
        ["derive", "model.clv", "--json", "a.json", "--latex", "nodir/b.tex", "--rust", "c.rs"];
    let (status, stderr) = run_in(dir.path(), &args, std::process::Stdio::piped());
    assert_eq!(status, 2, "{stderr}");
    assert!(stderr.contains("--latex nodir/b.tex"), "{stderr}");
    assert_eq!(std::fs::read_to_string(dir.path().join("a.json")).expect("read"), "old");
    assert_eq!(listing(dir.path()), ["a.json", "model.clv"]);
    // A failure while writing (a full device) also leaves the earlier file as it was.
    let args = ["derive", "model.clv", "--json", "a.json", "--latex", "/dev/full"];
    let (status, stderr) = run_in(dir.path(), &args, std::process::Stdio::piped());
    assert_eq!(status, 1, "{stderr}");
    assert!(stderr.contains("cannot write to /dev/full"), "{stderr}");
    assert_eq!(std::fs::read_to_string(dir.path().join("a.json")).expect("read"), "old");
    assert_eq!(listing(dir.path()), ["a.json", "model.clv"]);
    // When everything succeeds every file is replaced and no temporary file is left.
    let args = ["derive", "model.clv", "--json", "a.json", "--rust", "c.rs"];
    let (status, stderr) = run_in(dir.path(), &args, std::process::Stdio::piped());
    assert_eq!(status, 0, "{stderr}");
    assert!(std::fs::read_to_string(dir.path().join("a.json")).expect("read").starts_with('{'));
    assert_eq!(listing(dir.path()), ["a.json", "c.rs", "model.clv"]);
}

/// Issue 12, item 9: a failed write to stdout is reported, and no file is changed with it.
#[test]
fn issue_12_failed_stdout_write_is_reported() {
    let dir = dir_with_model(GOOD);
    for args in [&["derive", "model.clv"][..], &["derive", "model.clv", "--json", "-"][..]] {
        let full = std::fs::OpenOptions::new().write(true).open("/dev/full").expect("/dev/full");
        let (status, stderr) = run_in(dir.path(), args, full.into());
        assert_eq!(status, 1, "{args:?}: {stderr}");
        assert!(stderr.contains("cannot write to stdout"), "{stderr}");
    }
    let full = std::fs::OpenOptions::new().write(true).open("/dev/full").expect("/dev/full");
    std::fs::write(dir.path().join("a.json"), "old").expect("write");
    let (status, _) = run_in(dir.path(), &["derive", "model.clv", "--json", "a.json"], full.into());
    assert_eq!(status, 1);
    assert_eq!(std::fs::read_to_string(dir.path().join("a.json")).expect("read"), "old");
}

/// Issue 12, item 10: conflicting outputs are refused before the model is even read (the
/// model here does not parse, so an answer about the paths proves the order).
#[test]
fn issue_12_output_conflicts_refused_before_computing() {
    let broken = "H0 = (\n";
    let cases: &[(&[&str], &str)] = &[
        (&["--json", "x", "--latex", "./x"], "--latex ./x: --json writes the same file"),
        (&["--json", "model.clv"], "--json model.clv: that is the model file"),
        (&["--json", "-", "--latex", "-"], "--latex -: stdout is already taken by --json -"),
        (&["--rust", "missing/c.rs"], "--rust missing/c.rs: the directory missing is unusable"),
        (&["--json", "."], "--json .: not a file name"),
    ];
    for (extra, expected) in cases {
        let mut args = vec!["derive", "model.clv"];
        args.extend_from_slice(extra);
        check_bad_input(broken, &args, expected);
    }
    check_bad_input(broken, &["levels", "model.clv", "--json", "model.clv"], "the model file");
    check_bad_input(broken, &["check", "model.clv", "--plot", "no/p.svg"], "--plot no/p.svg");
    let dir = dir_with_model(GOOD);
    let (status, _) = run_in(
        dir.path(),
        &["derive", "model.clv", "--json", "model.clv"],
        std::process::Stdio::null(),
    );
    assert_eq!(status, 2);
    assert_eq!(std::fs::read_to_string(dir.path().join("model.clv")).expect("read"), GOOD);
}

/// Issue 12, item 12: an order beyond the limit is refused by `check` as by `derive`, before
/// `tested + 2` could wrap around; and the model's own `order` is refused at its statement.
#[test]
fn issue_12_order_beyond_the_limit() {
    for command in ["derive", "check"] {
        check_bad_input(
            GOOD,
            &[command, "model.clv", "--order", "4294967295"],
            "--order 4294967295: the order must be at most 1000",
        );
        check_bad_input(GOOD, &[command, "model.clv", "--order", "0"], "at least 1");
    }
    check_bad_input(
        &format!("{GOOD}order 1001\n"),
        &["check", "model.clv"],
        "model.clv:5:7: the order must be at most 1000",
    );
    check_bad_input(
        &format!("{GOOD}order 99999999999999999999\n"),
        &["derive", "model.clv"],
        "model.clv:5:7: the order must be at most 1000",
    );
    check_bad_input(
        &format!("{GOOD}order 3/2\n"),
        &["derive", "model.clv"],
        "model.clv:5:7: the order must be a non-negative integer",
    );
}

/// Issue 12, item 13: with `--plot -` the plot takes stdout and the table goes to stderr.
#[test]
fn issue_12_plot_to_stdout_keeps_the_table() {
    let (status, stdout, stderr) = run_cleave(GOOD, &["check", "model.clv", "--plot", "-"]);
    assert_eq!(status, 0, "{stderr}");
    assert!(stdout.starts_with("<svg"), "{stdout}");
    assert!(stderr.contains("Numeric check of model.clv"), "{stderr}");
}

/// Issue 12, items 1-7: `--max-seconds` stops a long derivation cleanly with exit status 1 and
/// advice, and leaves the outputs as they were.
#[test]
fn issue_12_max_seconds_stops_cleanly() {
    // A quasi-degenerate Lambda scheme to order 30: within the up-front estimate, yet many
    // seconds of work.
    let model = "param wp, ws\nspace a = levels(G1, G2, E)\nH0 = 7/4 * |G2><G2| + 10 * |E><E|\n\
                 V = wp * (|E><G1| + |G1><E|) + ws * (|E><G2| + |G2><E|)\nfocus 0, 7/4\norder 30\n";
    let dir = dir_with_model(model);
    std::fs::write(dir.path().join("a.json"), "old").expect("write");
    let args = ["derive", "model.clv", "--json", "a.json", "--max-seconds", "1"];
    let (status, stderr) = run_in(dir.path(), &args, std::process::Stdio::null());
    assert_eq!(status, 1, "{stderr}");
    assert!(
        stderr.contains("stopped after 1 s (--max-seconds 1); nothing was written"),
        "{stderr}"
    );
    assert_eq!(std::fs::read_to_string(dir.path().join("a.json")).expect("read"), "old");
    assert_eq!(listing(dir.path()), ["a.json", "model.clv"]);
}

/// Issue 12, item 17: the outputs are the same bytes whatever the number of threads (model
/// spaces may be derived in parallel; `RAYON_NUM_THREADS` sets the pool's size).
#[test]
fn issue_12_outputs_do_not_depend_on_the_thread_count() {
    let model = "param g\nspace q = oscillator(6)\nspace s = spin(1/2)\nH0 = q.n + s.z\n\
                 V = g * (q.lower * s.up + q.raise * s.down) + g * (q.lower + q.raise)\norder 3\n";
    let dir = dir_with_model(model);
    let mut outputs = Vec::new();
    for threads in ["1", "2", "4"] {
        let output = Command::new(env!("CARGO_BIN_EXE_cleave"))
            .args(["derive", "model.clv", "--json", "-"])
            .env("RAYON_NUM_THREADS", threads)
            .current_dir(dir.path())
            .output()
            .expect("run cleave");
        assert_eq!(output.status.code(), Some(0), "{}", String::from_utf8_lossy(&output.stderr));
        outputs.push(output.stdout);
    }
    assert!(!outputs[0].is_empty());
    assert_eq!(outputs[0], outputs[1]);
    assert_eq!(outputs[0], outputs[2]);
}

/// Runs `cleave levels model.clv` on raw bytes; returns the status and stderr.
fn levels_of_bytes(bytes: &[u8]) -> (i32, String) {
    let dir = tempfile::tempdir().expect("a temp dir");
    std::fs::write(dir.path().join("model.clv"), bytes).expect("write the model");
    run_in(dir.path(), &["levels", "model.clv"], std::process::Stdio::null())
}

/// Issue 12, item 15: messages are located at their cause whatever the bytes: a byte-order mark
/// is accepted, lone CR line ends count as line ends, text that is not UTF-8 is located at its
/// first bad byte, control characters are echoed visibly, and a long line is cut.
#[test]
fn issue_12_messages_are_located_on_odd_bytes() {
    let (status, stderr) = levels_of_bytes(format!("\u{feff}{GOOD}").as_bytes());
    assert_eq!(status, 0, "{stderr}");
    let (status, stderr) =
        levels_of_bytes(b"param g\rspace s = spin(1/2)\rH0 = s.w\rV = g * s.x\r");
    assert_eq!(status, 2);
    assert!(
        stderr.starts_with("model.clv:3:8: space `s` has no operator `w`\n  |\n3 | H0 = s.w\n"),
        "{stderr}"
    );
    let (status, stderr) =
        levels_of_bytes(b"param g\nspace s = spin(1/2)\nH0 = s.z # caf\xe9\nV = s.x\n");
    assert_eq!(status, 2);
    assert!(
        stderr.starts_with("model.clv:3:15: the model is not UTF-8 text (byte 0xE9 here)"),
        "{stderr}"
    );
    let (status, stderr) =
        levels_of_bytes(b"param g\nspace s = spin(1/2)\nH0 = s.z \x00\nV = s.x\n");
    assert_eq!(status, 2);
    assert!(stderr.starts_with("model.clv:3:10: "), "{stderr}");
    assert!(!stderr.contains('\0') && stderr.contains('\u{2400}'), "{stderr:?}");
    let deep = format!(
        "space s = spin(1/2)\nH0 = s.z\nV = {}s.x{}\n",
        "(".repeat(100_000),
        ")".repeat(100_000)
    );
    let (status, stderr) = levels_of_bytes(deep.as_bytes());
    assert_eq!(status, 2);
    assert!(stderr.starts_with("model.clv:3:"), "{stderr}");
    assert!(stderr.len() < 1000, "the echoed line is cut: {} bytes", stderr.len());
}

/// Issue 12, item 14: `check` refuses before deriving a matrix too large to diagonalize, counting
/// the doubling of a complex H(lambda): 400 states are checked when real, refused when complex.
#[test]
fn issue_12_check_size_counts_complex_doubling() {
    let real =
        "param g\nspace q = oscillator(400)\nH0 = q.n\nV = g * (q.lower + q.raise)\nfocus 0\n";
    let complex =
        "param g\nspace q = oscillator(400)\nH0 = q.n\nV = g * i * (q.lower - q.raise)\nfocus 0\n";
    // The real one is within the limit (asked of the library: diagonalizing it in a debug build
    // would make a slow test).
    let (model, _) = cleave::load(real).expect("lowers");
    assert_eq!(cleave::check::too_large(&model, &cleave::check::CheckOptions::default()), None);
    let (status, _, stderr) = run_cleave(complex, &["check", "model.clv", "--order", "1"]);
    assert_eq!(status, 1, "{stderr}");
    assert!(
        stderr.contains("a matrix of 800 rows, doubled because H(lambda) is complex"),
        "{stderr}"
    );
    let (status, _, stderr) = run_cleave(
        "space q = oscillator(1200)\nH0 = q.n\nV = q.lower + q.raise\nfocus 0\n",
        &["check", "model.clv"],
    );
    assert_eq!(status, 1, "{stderr}");
    assert!(stderr.contains("a matrix of 1200 rows at 24 values of lambda"), "{stderr}");
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
