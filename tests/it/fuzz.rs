//! No input may panic: random text and random soups of the language's tokens go through
//! parsing and lowering, and any error must be a located diagnostic that renders.

use proptest::prelude::*;

/// Tokens of the model language, including some that are wrong in most places.
const TOKENS: &[&str] = &[
    "param",
    "space",
    "let",
    "focus",
    "order",
    "H0",
    "V",
    "V2",
    "V0",
    "g",
    "U",
    "x",
    "q",
    "s",
    "d",
    "i",
    "=",
    ",",
    "(",
    ")",
    "[",
    "]",
    "+",
    "-",
    "*",
    "/",
    "^",
    ">",
    "0",
    "1",
    "2",
    "3/2",
    "0.125",
    "1e-3",
    "1e99999",
    "sqrt",
    "adj",
    "comm",
    "matrix",
    "oscillator",
    "spin",
    "levels",
    "L",
    "R",
    "q.lower",
    "q.raise",
    "q.n",
    "s.x",
    "s.y",
    "s.z",
    "s.up",
    "s.down",
    "s.w",
    "sector",
    "sum",
    "in",
    "..",
    ":",
    "%",
    "1..3",
    "3..1",
    "[up, dn]",
    "c[1, up].create",
    "c[2, dn].annihilate",
    "c[i, s].n",
    "c[4, up].n",
    "c.n",
    "f[1].z",
    "f[i % 2 + 1].x",
    "r.cos",
    "r.j2",
    "t.lower",
    "t.raise",
    "fermions",
    "rotor",
    "ladder",
    "cg",
    "threej",
    "dagger",
    "|up, dn>",
    "|0, 0>",
    "|1, +1>",
    "sum(i in 1..2: f[i].z)",
    "sum(i in 1..2, s in [up, dn]: c[i, s].n)",
    "|L><R|",
    "|0><1|",
    "|+1/2><-1/2|",
    "|d.L><d.R|",
    "|",
    "<",
    "\n",
    "\n",
    "#",
    " ",
    "µ",
    "\t",
];

/// Lines that make later soup tokens meaningful, so lowering gets past name resolution.
const PRELUDE: &str = "param g, U > 0\nspace q = oscillator(3)\nspace s = spin(1/2)\n\
    space d = levels(L, R)\nspace c = fermions(1..2, [up, dn])\nspace f[1..2] = spin(1/2)\n\
    space r = rotor(1)\nspace t = ladder(2)\n";

fn check_no_panic(text: &str) {
    match cleave::load(text) {
        Ok(_) => {}
        Err(diagnostic) => {
            let rendered = diagnostic.render(text, "fuzz.clv");
            assert!(rendered.starts_with("fuzz.clv:"), "{rendered}");
        }
    }
    let _ = cleave::lower::eval_scalar(text, &["g".to_string()]);
}

proptest! {
    #![proptest_config(ProptestConfig { cases: 200, ..ProptestConfig::default() })]

    #[test]
    fn random_text_never_panics(text in "\\PC{0,60}") {
        check_no_panic(&text);
    }

    #[test]
    fn token_soup_never_panics(tokens in prop::collection::vec(prop::sample::select(TOKENS), 0..30)) {
        let soup = tokens.join(" ");
        check_no_panic(&soup);
        check_no_panic(&format!("{PRELUDE}{soup}"));
    }

    #[test]
    fn soup_statements_never_panic(
        lines in prop::collection::vec(prop::collection::vec(prop::sample::select(TOKENS), 1..8), 1..6),
    ) {
        let body: Vec<String> = lines.iter().map(|line| line.join(" ")).collect();
        check_no_panic(&format!("{PRELUDE}{}\n", body.join("\n")));
    }
}

#[test]
fn deep_but_allowed_nesting_does_not_overflow() {
    let nested = format!("{}s.z{}", "(".repeat(32), ")".repeat(32));
    let chain = vec!["s.x"; 250].join("*");
    check_no_panic(&format!("{PRELUDE}H0 = {nested} ^ 2^2^2^-1\nV = {chain}\n"));
    check_no_panic(&format!("{PRELUDE}H0 = {}1\nV = 1\n", "-".repeat(250)));
}

/// Issue 12, item 16: every finding of the fuzz campaign (`cargo run --profile fuzz --example
/// fuzz`) is kept in `tests/fuzz_fixtures/` as `NAME.clv` with `NAME.txt`, whose first line is
/// the command that failed; each must now answer with exit status 0, 1 or 2 and a located
/// bad-input message; a run that `--max-seconds` stops cleanly (exit status 1 with advice)
/// is such an answer.
#[test]
fn issue_12_fuzz_findings_stay_fixed() {
    let dir = std::path::Path::new(env!("CARGO_MANIFEST_DIR")).join("tests/fuzz_fixtures");
    let mut fixtures: Vec<std::path::PathBuf> = std::fs::read_dir(&dir)
        .expect("the fixtures folder")
        .map(|e| e.expect("entry").path())
        .filter(|p| p.extension().is_some_and(|e| e == "clv"))
        .collect();
    fixtures.sort();
    assert!(!fixtures.is_empty());
    for fixture in fixtures {
        let record = std::fs::read_to_string(fixture.with_extension("txt")).expect("its record");
        let command: Vec<&str> = record.lines().next().expect("a command").split(' ').collect();
        assert_eq!(command[0], "cleave", "{record}");
        let work = tempfile::tempdir().expect("a temp dir");
        std::fs::copy(&fixture, work.path().join("model.clv")).expect("copy the model");
        let output = std::process::Command::new(env!("CARGO_BIN_EXE_cleave"))
            .args(&command[1..])
            .args(["--max-seconds", "10"])
            .current_dir(work.path())
            .output()
            .expect("run cleave");
        let stderr = String::from_utf8_lossy(&output.stderr);
        let status = output.status.code();
        assert!(matches!(status, Some(0..=2)), "{}: {status:?}\n{stderr}", fixture.display());
        if status == Some(2) {
            assert!(stderr.starts_with("model.clv:"), "{}: unlocated\n{stderr}", fixture.display());
        }
    }
}
