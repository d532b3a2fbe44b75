//! The fuzz campaign: models generated from the grammar and mutations of the bundled examples run
//! through `levels`, `derive` and `check`, each in a child process under a time and memory
//! budget. Every panic, abort, time-out, memory overrun or bad-input message without a location
//! is a finding, saved with its command as a fixture (move it to `tests/fuzz_fixtures/`, where a
//! test replays every one); the run fails when there is any. Each case
//! passes `--max-seconds` and `--max-memory` below those budgets, so a case that the command line
//! stops cleanly (exit status 1 with advice) is an answer, not a finding.
//!
//! ```text
//! cargo run --profile fuzz --example fuzz -- [--seconds 120] [--seed 12] [--out DIR]
//! ```
//!
//! The `fuzz` profile is `release` with overflow checks and debug assertions, so arithmetic that
//! would wrap silently in a release build is a finding too. Runs repeat exactly for one seed.

use std::io::Read;
use std::path::{Path, PathBuf};
use std::process::{Command, Stdio};
use std::time::{Duration, Instant};

/// Wall-clock budget of one case; the contract answers every model within 10 seconds.
const CASE_SECONDS: u64 = 10;
/// Resident memory budget of one case.
const CASE_MEMORY_BYTES: u64 = 2 << 30;

fn main() {
    let args: Vec<String> = std::env::args().collect();
    if args.get(1).map(String::as_str) == Some("--child") {
        // The case itself: run the command line in this process and report its exit status.
        let outcome =
            cleave::cli::run(std::iter::once("cleave".to_string()).chain(args[2..].to_vec()));
        std::process::exit(match outcome {
            cleave::cli::Outcome::Success => 0,
            cleave::cli::Outcome::Infeasible => 1,
            cleave::cli::Outcome::BadInput => 2,
        });
    }
    let mut seconds = 120u64;
    let mut seed = 12u64;
    let mut out = PathBuf::from("target/fuzz-findings");
    let mut rest = args.iter().skip(1);
    while let Some(flag) = rest.next() {
        let value = rest.next().unwrap_or_else(|| usage(&format!("{flag} needs a value")));
        match flag.as_str() {
            "--seconds" => seconds = value.parse().unwrap_or_else(|_| usage("--seconds N")),
            "--seed" => seed = value.parse().unwrap_or_else(|_| usage("--seed N")),
            "--out" => out = PathBuf::from(value),
            _ => usage(&format!("unknown option {flag}")),
        }
    }
    let work = out.join("work");
    std::fs::create_dir_all(&work).expect("create the output directory");
    let examples = bundled_examples();
    let mut rng = Rng(seed.max(1));
    let start = Instant::now();
    let (mut n_cases, mut n_findings) = (0u64, 0u64);
    while start.elapsed() < Duration::from_secs(seconds) {
        let text = if rng.below(2) == 0 || examples.is_empty() {
            generate_model(&mut rng)
        } else {
            let base = &examples[rng.below(examples.len() as u64) as usize];
            mutate(base, &mut rng)
        };
        let command = match rng.below(6) {
            0 | 1 => vec!["levels".to_string()],
            2..=4 => vec!["derive".to_string()],
            _ => vec!["check".to_string()],
        };
        let mut command = command;
        if command[0] != "levels" && rng.below(3) == 0 {
            command.extend(["--order".to_string(), (1 + rng.below(6)).to_string()]);
        }
        n_cases += 1;
        if let Some(finding) = run_case(&work, &text, &command) {
            n_findings += 1;
            let stem = out.join(format!("finding-{seed}-{n_cases}"));
            std::fs::write(stem.with_extension("clv"), &text).expect("save the model");
            let report = format!("cleave {} model.clv\n{finding}\n", command.join(" "));
            std::fs::write(stem.with_extension("txt"), report).expect("save the finding");
            eprintln!("finding {}: {finding}", stem.display());
        }
    }
    let n_passed = n_cases - n_findings;
    println!("fuzz: seed {seed}, {n_cases} cases in {} s", start.elapsed().as_secs());
    println!("{n_passed} passed, {n_findings} failed");
    if n_findings > 0 {
        eprintln!("findings are saved in {}", out.display());
        std::process::exit(1);
    }
}

fn usage(why: &str) -> ! {
    eprintln!("fuzz: {why}\nusage: fuzz [--seconds N] [--seed N] [--out DIR]");
    std::process::exit(2);
}

/// The `.clv` files of `examples/`.
fn bundled_examples() -> Vec<String> {
    let dir = Path::new(env!("CARGO_MANIFEST_DIR")).join("examples");
    let mut paths: Vec<PathBuf> = std::fs::read_dir(&dir)
        .map(|entries| entries.filter_map(|e| e.ok().map(|e| e.path())).collect())
        .unwrap_or_default();
    paths.retain(|p| p.extension().is_some_and(|e| e == "clv"));
    paths.sort();
    paths.iter().filter_map(|p| std::fs::read_to_string(p).ok()).collect()
}

/// Runs one case in a child process; `Some(what went wrong)` for a finding.
fn run_case(work: &Path, text: &str, command: &[String]) -> Option<String> {
    std::fs::write(work.join("model.clv"), text).expect("write the case");
    let stderr_path = work.join("stderr.txt");
    let stderr = std::fs::File::create(&stderr_path).expect("create the stderr file");
    let mut child = Command::new(std::env::current_exe().expect("the fuzz binary"))
        .arg("--child")
        .args(command)
        // The command line's own budget stops a long case cleanly (exit 1) before the time-out
        // and memory limit below call it a finding.
        .args(["--max-seconds", &(CASE_SECONDS - 2).to_string()])
        .args(["--max-memory", &((CASE_MEMORY_BYTES >> 20) * 3 / 4).to_string()])
        .arg("model.clv")
        .current_dir(work)
        .stdin(Stdio::null())
        .stdout(Stdio::null())
        .stderr(stderr)
        .spawn()
        .expect("start a case");
    let start = Instant::now();
    let status = loop {
        if let Some(status) = child.try_wait().expect("wait for a case") {
            break status;
        }
        let rss = resident_bytes(child.id());
        if start.elapsed() > Duration::from_secs(CASE_SECONDS) || rss > CASE_MEMORY_BYTES {
            let _ = child.kill();
            let _ = child.wait();
            return Some(if rss > CASE_MEMORY_BYTES {
                format!("memory: more than {} MiB resident", CASE_MEMORY_BYTES >> 20)
            } else {
                format!("time-out: no answer within {CASE_SECONDS} s")
            });
        }
        std::thread::sleep(Duration::from_millis(5));
    };
    let mut message = String::new();
    let _ = std::fs::File::open(&stderr_path).and_then(|mut f| f.read_to_string(&mut message));
    let excerpt: String = message.chars().take(2000).collect();
    match status.code() {
        Some(0 | 1) => None,
        Some(2) if is_located(&message) => None,
        Some(2) => Some(format!("exit 2 without FILE:LINE:COL\n{excerpt}")),
        Some(code) => Some(format!("exit status {code} (a panic is 101)\n{excerpt}")),
        None => Some(format!("killed by a signal (an abort or a crash)\n{excerpt}")),
    }
}

/// Whether a bad-input message starts `model.clv:LINE:COL: `.
fn is_located(message: &str) -> bool {
    let Some(rest) = message.strip_prefix("model.clv:") else { return false };
    let mut parts = rest.splitn(3, ':');
    let line = parts.next().unwrap_or("");
    let col = parts.next().unwrap_or("");
    let is_number = |s: &str| !s.is_empty() && s.bytes().all(|b| b.is_ascii_digit());
    is_number(line) && is_number(col)
}

/// Resident memory of a process in bytes (Linux `/proc`; 0 where it cannot be read).
fn resident_bytes(pid: u32) -> u64 {
    let status = std::fs::read_to_string(format!("/proc/{pid}/status")).unwrap_or_default();
    status
        .lines()
        .find_map(|l| l.strip_prefix("VmRSS:"))
        .and_then(|v| v.trim().trim_end_matches("kB").trim().parse::<u64>().ok())
        .map_or(0, |kb| kb * 1024)
}

/// xorshift64 (Marsaglia, Xorshift RNGs, 2003): deterministic for one seed.
struct Rng(u64);

impl Rng {
    fn next(&mut self) -> u64 {
        self.0 ^= self.0 << 13;
        self.0 ^= self.0 >> 7;
        self.0 ^= self.0 << 17;
        self.0
    }
    fn below(&mut self, n: u64) -> u64 {
        self.next() % n.max(1)
    }
    fn pick<'a, T>(&mut self, items: &'a [T]) -> &'a T {
        &items[self.below(items.len() as u64) as usize]
    }
}

/// What a generated model has declared, for expressions that mostly make sense.
struct Scope {
    params: Vec<String>,
    /// Operator atoms: `q.n`, `s.x`, `|L><R|`, ...
    operators: Vec<String>,
    /// Energies that may be H0 levels, for `focus`.
    focus: Vec<String>,
}

/// A model from the grammar: parameters, one to three small spaces, perhaps a `let`, H0 (often
/// diagonal, so that it has a spectrum), V, sometimes V2, `focus` and `order`.
fn generate_model(rng: &mut Rng) -> String {
    let mut text = String::new();
    let mut scope = Scope { params: Vec::new(), operators: Vec::new(), focus: Vec::new() };
    for name in ["g", "t", "U"] {
        if rng.below(2) == 0 {
            scope.params.push(name.to_string());
        }
    }
    if !scope.params.is_empty() {
        let items: Vec<String> = scope
            .params
            .iter()
            .map(|p| if rng.below(4) == 0 { format!("{p} > 0") } else { p.clone() })
            .collect();
        text.push_str(&format!("param {}\n", items.join(", ")));
    }
    let n_spaces = 1 + rng.below(3);
    let mut diagonal = Vec::new();
    for k in 0..n_spaces {
        match rng.below(3) {
            0 => {
                let name = format!("q{k}");
                text.push_str(&format!("space {name} = oscillator({})\n", 1 + rng.below(8)));
                for op in ["lower", "raise", "n"] {
                    scope.operators.push(format!("{name}.{op}"));
                }
                diagonal.push(format!("{name}.n"));
            }
            1 => {
                let name = format!("s{k}");
                let spin = *rng.pick(&["1/2", "1", "3/2", "2", "5/2"]);
                text.push_str(&format!("space {name} = spin({spin})\n"));
                for op in ["x", "y", "z", "up", "down"] {
                    scope.operators.push(format!("{name}.{op}"));
                }
                diagonal.push(format!("{name}.z"));
            }
            _ => {
                let name = format!("d{k}");
                let labels: Vec<String> =
                    (0..2 + rng.below(3)).map(|i| format!("L{k}{i}")).collect();
                text.push_str(&format!("space {name} = levels({})\n", labels.join(", ")));
                for a in &labels {
                    for b in &labels {
                        scope.operators.push(format!("|{a}><{b}|"));
                    }
                }
                diagonal.push(format!("|{}><{}|", labels[0], labels[0]));
            }
        }
    }
    if rng.below(3) == 0 {
        let value = operator_expr(rng, &scope, 2);
        text.push_str(&format!("let w = {value}\n"));
        scope.operators.push("w".to_string());
    }
    let h0 = if rng.below(4) == 0 {
        operator_expr(rng, &scope, 2)
    } else {
        let terms: Vec<String> =
            diagonal.iter().map(|d| format!("{} * {d}", scalar_expr(rng, &scope, 1))).collect();
        terms.join(" + ")
    };
    text.push_str(&format!("H0 = {h0}\n"));
    text.push_str(&format!("V = {}\n", operator_expr(rng, &scope, 3)));
    if rng.below(4) == 0 {
        text.push_str(&format!("V2 = {}\n", operator_expr(rng, &scope, 2)));
    }
    scope.focus.extend(["0", "1", "1/2", "-1/2", "2"].map(String::from));
    if rng.below(3) == 0 {
        text.push_str(&format!("focus {}\n", rng.pick(&scope.focus)));
    }
    if rng.below(2) == 0 {
        text.push_str(&format!("order {}\n", 1 + rng.below(5)));
    }
    text
}

/// A scalar expression: numbers in every literal form, parameters, `sqrt`, small powers.
fn scalar_expr(rng: &mut Rng, scope: &Scope, depth: u32) -> String {
    if depth == 0 || rng.below(3) == 0 {
        return match rng.below(6) {
            0 if !scope.params.is_empty() => rng.pick(&scope.params).clone(),
            1 => format!("sqrt({})", 1 + rng.below(12)),
            2 => rng.pick(&["0.5", "1e-3", "2.5E1", "3/4", "1/3", "0"]).to_string(),
            _ => (1 + rng.below(9)).to_string(),
        };
    }
    let a = scalar_expr(rng, scope, depth - 1);
    let b = scalar_expr(rng, scope, depth - 1);
    match rng.below(6) {
        0 => format!("{a} + {b}"),
        1 => format!("{a} - {b}"),
        2 => format!("({a}) * ({b})"),
        3 => format!("({a}) / ({b})"),
        4 => format!("({a})^{}", rng.below(4)),
        _ => format!("-({a})"),
    }
}

/// An operator expression: declared operators combined with scalars, sums, products, `adj`,
/// `comm` and small powers.
fn operator_expr(rng: &mut Rng, scope: &Scope, depth: u32) -> String {
    if depth == 0 || rng.below(3) == 0 {
        let atom = rng.pick(&scope.operators).clone();
        return if rng.below(2) == 0 {
            format!("{} * {atom}", scalar_expr(rng, scope, 1))
        } else {
            atom
        };
    }
    let a = operator_expr(rng, scope, depth - 1);
    let b = operator_expr(rng, scope, depth - 1);
    match rng.below(7) {
        0 | 1 => format!("{a} + {b}"),
        2 => format!("{a} - {b}"),
        3 => format!("({a}) * ({b})"),
        4 => format!("({a} + adj({a}))"),
        5 => format!("({a})^{}", rng.below(4)),
        _ => format!("comm({a}, {b}) + comm(adj({b}), adj({a}))"),
    }
}

/// Tokens and bytes that mutations insert: the language's own and some that it never has.
const INSERTS: &[&str] = &[
    "+",
    "-",
    "*",
    "/",
    "^",
    "(",
    ")",
    "[",
    "]",
    ",",
    "=",
    "|",
    "<",
    ">",
    ".",
    "0",
    "1",
    "1/2",
    "0.125",
    "1e-3",
    "1e999",
    "99999999999999999999",
    "^1000",
    "^-1",
    "sqrt(",
    "adj(",
    "comm(",
    "matrix(",
    "param x",
    "space z = spin(7/2)",
    "focus",
    "order",
    "let",
    "H0",
    "V",
    "V2",
    "V9",
    "g",
    "lambda",
    "\n",
    "\r",
    "\r\n",
    "\t",
    "#",
    "\u{feff}",
    "\u{0}",
    "µ",
    "\u{e9}",
];

/// A mutation of an example: a few edits chosen among deleting, duplicating or swapping lines,
/// changing a number, and inserting or deleting a token.
fn mutate(base: &str, rng: &mut Rng) -> String {
    let mut text = base.to_string();
    for _ in 0..1 + rng.below(3) {
        let mut lines: Vec<String> = text.split('\n').map(String::from).collect();
        let n = lines.len() as u64;
        match rng.below(6) {
            0 if n > 1 => {
                lines.remove(rng.below(n) as usize);
            }
            1 => {
                let k = rng.below(n) as usize;
                let line = lines[k].clone();
                lines.insert(k, line);
            }
            2 if n > 1 => {
                let (a, b) = (rng.below(n) as usize, rng.below(n) as usize);
                lines.swap(a, b);
            }
            3 => {
                // Change one number: smaller, larger or far larger.
                let k = rng.below(n) as usize;
                let number = *rng.pick(&["0", "1", "2", "7", "40", "100", "1000", "3/2"]);
                if let Some(pos) = lines[k].find(|c: char| c.is_ascii_digit()) {
                    let end = lines[k][pos..]
                        .find(|c: char| !c.is_ascii_digit())
                        .map_or(lines[k].len(), |e| pos + e);
                    lines[k].replace_range(pos..end, number);
                }
            }
            4 => {
                let k = rng.below(n) as usize;
                let at = char_boundary(&lines[k], rng);
                let token = *rng.pick(INSERTS);
                lines[k].insert_str(at, token);
            }
            _ => {
                let k = rng.below(n) as usize;
                let at = char_boundary(&lines[k], rng);
                let end = lines[k][at..].chars().next().map_or(at, |c| at + c.len_utf8());
                lines[k].replace_range(at..end, "");
            }
        }
        text = lines.join("\n");
    }
    text
}

/// A random position in `line` on a character boundary.
fn char_boundary(line: &str, rng: &mut Rng) -> usize {
    let boundaries: Vec<usize> = line.char_indices().map(|(i, _)| i).chain([line.len()]).collect();
    *rng.pick(&boundaries)
}
