//! The model and spectrum layer against values from outside the project: angular-momentum
//! matrices, the truncated oscillator, the spin-orbit and exchange spectra, plus printing exact
//! values and reading them back.
//!
//! Each group has one `check_...` helper; a test is a parameter or a minimal model and one call.
//! Every expected value that does not come from cleave names its source beside it.

use cleave::exact::{Field, Fraction, ParamId, Radical, RatFunc, Rational, Symbols};
use cleave::linalg::SparseVec;
use cleave::model::space::Spin;
use cleave::model::{Basis, LabelField, Model, Operator, Space, SpinOp};
use cleave::spectrum::unperturbed_levels;
use proptest::prelude::*;

/// Loads model text, failing with the rendered diagnostic.
fn load(text: &str) -> Model {
    match cleave::load(text) {
        Ok((model, _)) => model,
        Err(d) => panic!("did not lower:\n{}", d.render(text, crate::support::FILE_NAME)),
    }
}

fn q(numer: i64, denom: i64) -> Rational {
    Rational::ratio(numer, denom).expect("non-zero denominator")
}

fn constant(value: &Rational) -> RatFunc {
    RatFunc::from_rational(value)
}

/// The commutator `[a, b] = ab - ba`.
fn commutator(a: &Operator, b: &Operator) -> Operator {
    a.mul(b).sub(&b.mul(a))
}

/// The rank of a list of vectors of length `n`, by Gaussian elimination written here, so that
/// it does not rely on the elimination the spectrum itself uses.
fn rank(vectors: &[SparseVec<RatFunc>], n: usize) -> usize {
    let mut rows: Vec<Vec<RatFunc>> =
        vectors.iter().map(|v| (0..n).map(|k| v.get(k)).collect()).collect();
    let mut rank = 0;
    for col in 0..n {
        let Some(pivot) = (rank..rows.len()).find(|&r| !rows[r][col].is_zero()) else {
            continue;
        };
        rows.swap(rank, pivot);
        let pivot_row = rows[rank].clone();
        let inv = pivot_row[col].inv().expect("pivot is non-zero");
        for (r, row) in rows.iter_mut().enumerate() {
            if r != rank && !row[col].is_zero() {
                let factor = row[col].clone() * &inv;
                for (entry, p) in row.iter_mut().zip(&pivot_row) {
                    *entry -= &(factor.clone() * p);
                }
            }
        }
        rank += 1;
    }
    rank
}

// ---------------------------------------------------------------------------------------------
// 1. Angular momentum.

/// Checks the built-in operators of `spin(j)`, `j = twice_j / 2`, against the textbook algebra.
///
/// Sources, all with Condon–Shortley phases (real, non-negative matrix elements of `J+`):
/// - `J+ |j, m> = sqrt(j(j+1) - m(m+1)) |j, m+1>`: J. J. Sakurai and J. Napolitano, Modern
///   Quantum Mechanics, 2nd ed. (2011), eq. (3.5.41); the equation number is from memory. The
///   same formula, written `sqrt((j-m)(j+m+1))`, is in every quantum-mechanics text; that form is
///   the one evaluated here, so the check does not repeat the expression cleave uses.
/// - `[Jx, Jy] = i Jz` and cyclic permutations (hbar = 1): same book, eq. (3.1.20), number from
///   memory.
/// - `J^2 |j, m> = j(j+1) |j, m>`: same book, eq. (3.5.34), number from memory.
///
/// The state order `m = j, j-1, ..., -j` is cleave's documented convention (`space::Spin`),
/// not an external fact.
fn check_angular_momentum(twice_j: u32) {
    let n = twice_j as usize + 1;
    let j = q(twice_j as i64, 2);
    let op = |which| Space::spin(twice_j, which);
    let (up, down, x, y, z) =
        (op(SpinOp::Up), op(SpinOp::Down), op(SpinOp::X), op(SpinOp::Y), op(SpinOp::Z));

    // States are ordered m = j, ..., -j, and labelled so.
    let space = Space::new("s", Spin { twice_j });
    let basis = Basis::new(vec![space.clone()]).expect("small basis");
    for idx in 0..n {
        let m = j.clone() - Rational::from_i64(idx as i64);
        assert_eq!(space.kind().label(idx), [LabelField::Signed(m.clone())], "m of state {idx}");
        assert_eq!(z.get(idx, idx), constant(&m), "Jz on state {idx}");
    }
    let top =
        if twice_j % 2 == 0 { format!("|+{}>", twice_j / 2) } else { format!("|+{twice_j}/2>") };
    assert_eq!(basis.ket_label(0), top);

    // <m+1|J+|m> for every m, and no other entry of J+.
    for col in 0..n {
        for row in 0..n {
            let entry = up.get(row, col);
            if row + 1 != col {
                assert!(entry.is_zero(), "<{row}|J+|{col}> = {entry:?}, expected 0");
                continue;
            }
            let m = j.clone() - Rational::from_i64(col as i64);
            let square = (j.clone() - m.clone()) * (j.clone() + m.clone() + Rational::one());
            let expected = RatFunc::constant(Radical::sqrt_of(&square));
            assert_eq!(entry, expected, "<m+1|J+|m> at m = {m}");
            // The root is the positive real one.
            assert_eq!(entry.clone() * &entry, constant(&square), "square at m = {m}");
            let root = entry.as_constant().expect("a number");
            assert!(root.is_real(), "real at m = {m}");
            assert!(root.terms().iter().all(|(_, c)| c.is_positive()), "positive at m = {m}");
        }
    }
    assert_eq!(down, up.adjoint(), "J- is the adjoint of J+");

    // Jx = (J+ + J-)/2 and Jy = (J+ - J-)/(2i), i.e. J+ = Jx + i Jy.
    let i = RatFunc::constant(Radical::i());
    assert_eq!(x.add(&y.scale(&i)), up, "J+ = Jx + i Jy");
    assert_eq!(x.sub(&y.scale(&i)), down, "J- = Jx - i Jy");

    // [Jx, Jy] = i Jz and cyclic.
    assert_eq!(commutator(&x, &y), z.scale(&i), "[Jx, Jy]");
    assert_eq!(commutator(&y, &z), x.scale(&i), "[Jy, Jz]");
    assert_eq!(commutator(&z, &x), y.scale(&i), "[Jz, Jx]");

    // J^2 = j(j+1) times the identity.
    let casimir = x.mul(&x).add(&y.mul(&y)).add(&z.mul(&z));
    let expected = Operator::identity(n).scale(&constant(&(j.clone() * (j + Rational::one()))));
    assert_eq!(casimir, expected, "J^2");

    // The model language gives the same matrices.
    let text = format!("space s = spin({twice_j}/2)\nH0 = s.z\nV = s.x\n");
    let model = load(&text);
    assert_eq!(model.h0(), &z, "s.z from the model language");
    assert_eq!(&model.perturbations()[0], &x, "s.x from the model language");
    assert_eq!(model.basis().ket_label(0), top, "label from the model language");
}

#[test]
fn spin_one_half() {
    check_angular_momentum(1);
}

#[test]
fn spin_one() {
    check_angular_momentum(2);
}

#[test]
fn spin_three_halves() {
    check_angular_momentum(3);
    let labels: Vec<String> = {
        let space = Space::new("s", Spin { twice_j: 3 });
        let basis = Basis::new(vec![space]).expect("small basis");
        (0..4).map(|k| basis.ket_label(k)).collect()
    };
    assert_eq!(labels, ["|+3/2>", "|+1/2>", "|-1/2>", "|-3/2>"]);
}

#[test]
fn spin_two() {
    check_angular_momentum(4);
}

#[test]
fn spin_five_halves() {
    check_angular_momentum(5);
}

// ---------------------------------------------------------------------------------------------
// 2. The truncated oscillator.

/// `<n|x^4|n>` for the untruncated oscillator, `x = (a + a^dag)/sqrt(2)` (hbar = m = omega = 1):
/// `(6n^2 + 6n + 3)/4`. Standard result; it is the first-order shift of the quartic anharmonic
/// oscillator, `(3/4)(2n^2 + 2n + 1)` per unit coupling, found in the perturbation-theory chapter
/// of the usual quantum-mechanics texts (quoted from memory, no equation number). Derivation,
/// which is what this test relies on: `x^4` returns to `|n>` along the six paths of two steps up
/// (U) and two down (D), each step carrying `1/sqrt(2)` and `sqrt` of the upper Fock number:
/// `UUDD (n+1)(n+2)`, `UDUD (n+1)^2`, `UDDU (n+1)n`, `DUUD n(n+1)`, `DUDU n^2`, `DDUU n(n-1)`;
/// their sum over 4 is `(6n^2 + 6n + 3)/4`.
fn x4_diagonal(n: i64) -> Rational {
    q(6 * n * n + 6 * n + 3, 4)
}

/// Checks `oscillator(N)` against the ladder algebra and `<n|x^4|n>`, both away from the cut and
/// at it.
fn check_oscillator(n_states: usize) {
    let n_top = n_states as i64;
    let text = format!(
        "space q = oscillator({n_states})\nlet x = (q.lower + q.raise) / sqrt(2)\nH0 = q.n\nV = x^4\n"
    );
    let model = load(&text);
    let (a, adag, number) =
        (Space::lower(n_states), Space::raise(n_states), Space::number(n_states));

    // [a, a^dag] = 1 (standard result) on every state below the top. At the top |N-1>, a^dag
    // has nowhere to go (the basis is cut there), so a a^dag |N-1> = 0 while a^dag a |N-1> =
    // (N-1)|N-1>: the commutator is 1 - N there. That is the truncation, not an error.
    let mut expected = vec![RatFunc::one(); n_states];
    expected[n_states - 1] = RatFunc::from_i64(1 - n_top);
    assert_eq!(commutator(&a, &adag), Operator::diagonal(expected), "[a, a^dag]");

    // a^dag a = n exactly, even at the cut, and q.n is that operator (standard result).
    assert_eq!(adag.mul(&a), number, "a^dag a");
    assert_eq!(model.h0(), &number, "q.n");

    // x^4 through the model language equals x^4 built from the constructors.
    let root_half = RatFunc::constant(Radical::sqrt_of(&q(1, 2)));
    let x = a.add(&adag).scale(&root_half);
    let x4 = x.mul(&x).mul(&x).mul(&x);
    assert_eq!(&model.perturbations()[0], &x4, "x^4 from the model language");

    // Away from the cut: every path from |n> reaches at most |n+2>, inside the basis when
    // n <= N - 3, so the untruncated value holds exactly.
    for n in 0..=n_top - 3 {
        let idx = n as usize;
        assert_eq!(x4.get(idx, idx), constant(&x4_diagonal(n)), "<{n}|x^4|{n}>");
    }
    // At n = N - 2 only the path UUDD, through |N>, is lost: (6n^2+6n+3)/4 - (n+1)(n+2)/4.
    let n = n_top - 2;
    let expected = x4_diagonal(n) - q((n + 1) * (n + 2), 4);
    assert_eq!(x4.get(n as usize, n as usize), constant(&expected), "<N-2|x^4|N-2>");
    // At n = N - 1 only DUDU and DDUU stay inside: (n^2 + n(n-1))/4 = n(2n-1)/4.
    let n = n_top - 1;
    let expected = q(n * (2 * n - 1), 4);
    assert_eq!(x4.get(n as usize, n as usize), constant(&expected), "<N-1|x^4|N-1>");
}

#[test]
fn oscillator_twelve_states() {
    check_oscillator(12);
    // The values at the cut for N = 12, written out: 531/4 at n = 10 (untruncated 663/4) and
    // 231/4 at n = 11 (untruncated 795/4).
    let x4 = {
        let model = load(
            r#"space q = oscillator(12)
let x = (q.lower + q.raise) / sqrt(2)
H0 = q.n
V = x^4
"#,
        );
        model.perturbations()[0].clone()
    };
    assert_eq!(x4.get(10, 10), constant(&q(531, 4)));
    assert_eq!(x4.get(11, 11), constant(&q(231, 4)));
    assert_eq!(x4_diagonal(10), q(663, 4));
    assert_eq!(x4_diagonal(11), q(795, 4));
}

// ---------------------------------------------------------------------------------------------
// 3 and 4. Spectra of coupled angular momenta.

/// Loads `text` and checks that `spectrum::unperturbed_levels` returns exactly `expected`
/// (energy, degeneracy) in this (ascending) order, that every returned state is an exact
/// eigenvector of H0 with its level's energy, and that each level's states are independent.
fn check_levels(text: &str, expected: &[(RatFunc, usize)]) {
    let model = load(text);
    let names = model.param_names();
    let show = |v: &RatFunc| v.display(Symbols { names: &names }).to_string();
    let spectrum = unperturbed_levels(&model).unwrap_or_else(|e| panic!("no spectrum: {e}"));
    let found: Vec<(String, usize)> =
        spectrum.levels.iter().map(|l| (show(&l.energy), l.degeneracy())).collect();
    let wanted: Vec<(String, usize)> = expected.iter().map(|(e, d)| (show(e), *d)).collect();
    assert_eq!(found, wanted, "levels (energy, degeneracy)");
    for (level, (energy, _)) in spectrum.levels.iter().zip(expected) {
        assert_eq!(&level.energy, energy);
        let n = model.basis().dimension();
        assert_eq!(
            rank(&level.states, n),
            level.degeneracy(),
            "independent states at {}",
            show(energy)
        );
        for state in &level.states {
            assert!(!state.is_zero());
            assert_eq!(
                model.h0().mul_vec(state),
                state.scale(&level.energy),
                "H0 v = E v at E = {}",
                show(energy)
            );
        }
    }
}

/// The levels of `xi L.S` for orbital `l = twice_l / 2` and `s = 1/2`: `j = l +- 1/2`, energy
/// `xi/2 [j(j+1) - l(l+1) - s(s+1)]`, degeneracy `2j + 1`, lower level first (`xi > 0`).
/// Source: the fine-structure (spin-orbit) energy `<L.S> = [j(j+1) - l(l+1) - s(s+1)]/2` of any
/// atomic-physics text, e.g. B. H. Bransden and C. J. Joachain, Physics of Atoms and Molecules,
/// 2nd ed. (2003), chapter 5 (fine structure of hydrogen); chapter quoted from memory, equation
/// number not recalled.
fn spin_orbit_levels(twice_l: i64) -> Vec<(RatFunc, usize)> {
    let xi = RatFunc::param(ParamId(0));
    let l = q(twice_l, 2);
    let s = q(1, 2);
    let mut res: Vec<(RatFunc, usize)> = [twice_l - 1, twice_l + 1]
        .into_iter()
        .map(|twice_j| {
            let j = q(twice_j, 2);
            let bracket = j.clone() * (j + Rational::one())
                - l.clone() * (l.clone() + Rational::one())
                - s.clone() * (s.clone() + Rational::one());
            let energy = xi.clone() * &constant(&(bracket * q(1, 2)));
            (energy, (twice_j + 1) as usize)
        })
        .collect();
    res.sort_by_key(|(_, d)| *d);
    res
}

#[test]
fn spin_orbit_l_one() {
    let expected = spin_orbit_levels(2);
    // j = 1/2 at -xi (2 states), j = 3/2 at xi/2 (4 states).
    assert_eq!(expected[0].0, -RatFunc::param(ParamId(0)));
    check_levels(
        r#"param xi > 0
space l = spin(1)
space e = spin(1/2)
H0 = xi * (l.z*e.z + (l.up*e.down + l.down*e.up)/2)
V = l.z
"#,
        &expected,
    );
}

#[test]
fn spin_orbit_l_two() {
    // j = 3/2 at -3*xi/2 (4 states), j = 5/2 at xi (6 states).
    let expected = spin_orbit_levels(4);
    assert_eq!(expected[1].0, RatFunc::param(ParamId(0)));
    check_levels(
        r#"param xi > 0
space l = spin(2)
space e = spin(1/2)
H0 = xi * (l.z*e.z + (l.up*e.down + l.down*e.up)/2)
V = l.z
"#,
        &expected,
    );
}

/// `J S1.S2` for two spins 1/2: singlet at `-3J/4` (1 state), triplet at `J/4` (3 states), from
/// `S1.S2 = [S(S+1) - 3/2]/2`. Standard result.
#[test]
fn exchange_of_two_spins_one_half() {
    let exchange = RatFunc::param(ParamId(0));
    check_levels(
        r#"param J > 0
space s1 = spin(1/2)
space s2 = spin(1/2)
H0 = J * (s1.z*s2.z + (s1.up*s2.down + s1.down*s2.up)/2)
V = s1.z
"#,
        &[(exchange.clone() * &constant(&q(-3, 4)), 1), (exchange * &constant(&q(1, 4)), 3)],
    );
}

// ---------------------------------------------------------------------------------------------
// 5. Printing exact values and reading them back.

/// Parameter names for the round trips; `xi` checks that a name longer than one letter reads back.
const NAMES: [&str; 3] = ["g", "t", "xi"];

/// Small rational functions of up to three parameters: integers, square roots of small rationals
/// (negative ones give `i*sqrt(..)`), `i` and parameters, combined by sums, differences, products
/// and quotients (a zero divisor leaves the dividend).
fn small_ratfunc() -> impl Strategy<Value = RatFunc> {
    let leaf = prop_oneof![
        (-4i64..=4).prop_map(RatFunc::from_i64),
        (-6i64..=6, 1i64..=4).prop_map(|(n, d)| RatFunc::constant(Radical::sqrt_of(&q(n, d)))),
        Just(RatFunc::constant(Radical::i())),
        (0u32..3).prop_map(|k| RatFunc::param(ParamId(k))),
    ];
    leaf.prop_recursive(4, 16, 2, |inner| {
        (inner.clone(), inner, 0u8..4).prop_map(|(a, b, op)| match op {
            0 => a + &b,
            1 => a - &b,
            2 => a * &b,
            _ => match b.inv() {
                Some(inv) => a * &inv,
                None => a,
            },
        })
    })
}

/// Small radicals: up to three terms `c * sqrt(p/d)` with small `c`, `p` (of either sign) and `d`.
fn small_radical() -> impl Strategy<Value = Radical> {
    let term = (-4i64..=4, 1i64..=3, -7i64..=7, 1i64..=3);
    prop::collection::vec(term, 0..=3).prop_map(|terms| {
        terms.into_iter().fold(Radical::zero(), |acc, (c, cd, p, pd)| {
            acc + Radical::sqrt_of(&q(p, pd)) * Radical::from_rational(&q(c, cd))
        })
    })
}

/// Prints `value` with `names` and reads it back with the model language's scalar reader.
fn check_round_trip(value: &RatFunc, names: &[String]) -> Result<(), TestCaseError> {
    let text = value.display(Symbols { names }).to_string();
    let again = cleave::lower::eval_scalar(&text, names).map_err(|d| {
        TestCaseError::fail(format!("{text:?} does not read back:\n{}", d.render(&text, "x")))
    })?;
    prop_assert_eq!(&again, value, "printed as {:?}", text);
    Ok(())
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(64))]

    /// A sum and a quotient formed in the engine's denominator-aware form, handed on as a
    /// `RatFunc`, print and read back as the same value that `RatFunc` arithmetic gives.
    #[test]
    fn fraction_prints_and_reads_back(a in small_ratfunc(), b in small_ratfunc()) {
        let names: Vec<String> = NAMES.iter().map(|s| s.to_string()).collect();
        let (fa, fb) = (Fraction::from_ratfunc(&a), Fraction::from_ratfunc(&b));
        let sum = (fa.clone() + &fb).to_ratfunc();
        prop_assert_eq!(&sum, &(a.clone() + &b));
        check_round_trip(&sum, &names)?;
        if let (Some(inv), Some(expected)) = (fb.inv(), b.inv()) {
            let quotient = (fa * &inv).to_ratfunc();
            prop_assert_eq!(&quotient, &(a * &expected));
            check_round_trip(&quotient, &names)?;
        }
    }

    #[test]
    fn ratfunc_prints_and_reads_back(value in small_ratfunc()) {
        let names: Vec<String> = NAMES.iter().map(|s| s.to_string()).collect();
        check_round_trip(&value, &names)?;
    }

    #[test]
    fn radical_prints_and_reads_back(value in small_radical()) {
        let text = value.to_string();
        let again = cleave::lower::eval_scalar(&text, &[]).map_err(|d| {
            TestCaseError::fail(format!("{text:?} does not read back:\n{}", d.render(&text, "x")))
        })?;
        prop_assert_eq!(again.as_constant(), Some(value), "printed as {:?}", text);
    }
}

/// The path-graph (tridiagonal) H0 on `n` named levels: `|a_k><a_k+1| + h.c.`.
fn path_h0(n: usize, v: &str) -> String {
    let labels: Vec<String> = (0..n).map(|k| format!("a{k}")).collect();
    let hops: Vec<String> =
        (0..n - 1).map(|k| format!("|a{k}><a{}| + |a{}><a{k}|", k + 1, k + 1)).collect();
    format!("space d = levels({})\nH0 = {}\nV = {v}\n", labels.join(", "), hops.join(" + "))
}

/// Issue 12, item 5: a non-diagonal numeric H0 is split by factoring its characteristic
/// polynomial in polynomial time. The path graph on n sites has the eigenvalues 2 cos(k pi /
/// (n + 1)) (a standard result, e.g. Brouwer & Haemers, Spectra of Graphs, 2012, §1.4.4), which
/// square roots of rationals write only for small n: n = 2, 3, 4, 5 split (1, sqrt 2, the golden
/// ratio, sqrt 3 appear); for n = 6, 10, 16, 30 (n + 1 = 7, 11, 17, 31) they are roots of
/// irreducible factors of degree 3, 5, 8, 15, which are refused with the characteristic
/// polynomial (exit status 1).
#[test]
fn issue_12_non_diagonal_numeric_h0_is_split_or_refused_quickly() {
    for n in [2, 3, 4, 5] {
        let spectrum = unperturbed_levels(&load(&path_h0(n, "|a0><a0|"))).expect("splits");
        assert_eq!(spectrum.levels.len(), n, "n = {n}");
    }
    for n in [6, 10, 16, 30] {
        let err = unperturbed_levels(&load(&path_h0(n, "|a0><a0|"))).expect_err("refused");
        assert!(err.to_string().contains("square roots of rationals cannot write"), "{err}");
    }
    // The quartic oscillator with its quartic term moved into H0: a numeric 30-state H0.
    let quartic = "space q = oscillator(30)\nlet x = (q.lower + q.raise) / sqrt(2)\n\
                   H0 = q.n + 1/2 + 3/40 * x^4\nV = x^2\n";
    let err = unperturbed_levels(&load(quartic)).expect_err("no radical eigenvalues");
    assert!(err.to_string().contains("characteristic polynomial"), "{err}");
}

/// Issue 12, item 6: `H0 = 0` with a symbolic V is one level holding every state, at once.
#[test]
fn issue_12_zero_h0_is_one_level() {
    for n in [6, 12, 40] {
        let model =
            format!("param g\nspace q = oscillator({n})\nH0 = 0\nV = g*(q.lower + q.raise)\n");
        let spectrum = unperturbed_levels(&load(&model)).expect("diagonal");
        assert_eq!(spectrum.levels.len(), 1);
        assert_eq!(spectrum.levels[0].degeneracy(), n);
    }
}
