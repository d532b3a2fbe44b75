//! Micro benchmarks of exact arithmetic: add, multiply and invert for `Rational`, `Radical` and
//! a three-parameter `RatFunc`. Each bench is kept short so it can run on a shared machine.

use std::time::Duration;

use cleave::exact::{Field, Fraction, ParamId, Radical, RatFunc, Rational};
use criterion::{black_box, criterion_main, Criterion};

fn rational(n: i64, d: i64) -> Rational {
    Rational::ratio(n, d).expect("non-zero denominator")
}

fn radical_sample() -> (Radical, Radical) {
    let root = |n: i64| Radical::sqrt_of(&Rational::from_i64(n));
    // 2 + 3*sqrt(2) - sqrt(6) and 1/2 - sqrt(3) + i.
    let a = Radical::from_i64(2) + root(2).scale(&Rational::from_i64(3)) - root(6);
    let b = Radical::from_rational(&rational(1, 2)) - root(3) + Radical::i();
    (a, b)
}

fn ratfunc_sample() -> (RatFunc, RatFunc) {
    let g = RatFunc::param(ParamId(0));
    let w = RatFunc::param(ParamId(1));
    let delta = RatFunc::param(ParamId(2));
    let two = RatFunc::from_i64(2);
    // (g^2 + w*delta)/(2w - delta) and g/(w + delta): the shape of second-order energy terms.
    let a = (&g * &g + &w * &delta) * (&two * &w - &delta).inv().expect("non-zero");
    let b = &g * &(&w + &delta).inv().expect("non-zero");
    (a, b)
}

/// Two values over five energy-difference factors (`w1 - w2`, `w1 - wr`, `w2 - wr`, `w1 + wr`,
/// `w2 + wr`), with numerators of the size fourth-order terms have: the same values as `RatFunc`
/// and as `Fraction` (known factors, no gcd on add and multiply; `cancel` divides them out).
fn five_factor_sample() -> (RatFunc, RatFunc) {
    let p = |k: u32| RatFunc::param(ParamId(k));
    let (w1, w2, wr, g) = (p(0), p(1), p(2), p(3));
    let inv = |x: RatFunc| x.inv().expect("non-zero");
    let d = [&w1 - &w2, &w1 - &wr, &w2 - &wr, &w1 + &wr, &w2 + &wr];
    let g4 = &g * &g * &g * &g;
    let a = &g4 * &(&w1 + &w2 + &wr) * inv(&d[0] * &d[1] * &d[1] * &d[3]);
    let b = &g4 * &(&w1 - &wr) * inv(&d[2] * &d[2] * &d[4] * &d[0]);
    (a, b)
}

fn five_factor_fractions() -> (Fraction, Fraction) {
    let p = |k: u32| RatFunc::param(ParamId(k));
    let (w1, w2, wr, g) = (p(0), p(1), p(2), p(3));
    let f = |x: &RatFunc| Fraction::from_ratfunc(x);
    let inv = |x: RatFunc| Fraction::from_ratfunc(&x).inv().expect("non-zero");
    let d = [&w1 - &w2, &w1 - &wr, &w2 - &wr, &w1 + &wr, &w2 + &wr];
    let d: Vec<Fraction> = d.into_iter().map(inv).collect();
    let g4 = f(&(&g * &g * &g * &g));
    let a = g4.clone() * &f(&(&w1 + &w2 + &wr)) * &d[0] * &d[1] * &d[1] * &d[3];
    let b = g4 * &f(&(&w1 - &wr)) * &d[2] * &d[2] * &d[4] * &d[0];
    (a, b)
}

fn bench_field<F: Field>(c: &mut Criterion, name: &str, a: &F, b: &F) {
    let mut group = c.benchmark_group(name);
    group
        .sample_size(20)
        .measurement_time(Duration::from_secs(1))
        .warm_up_time(Duration::from_millis(300));
    group.bench_function("add", |bench| bench.iter(|| black_box(a).clone() + black_box(b)));
    group.bench_function("mul", |bench| bench.iter(|| black_box(a).clone() * black_box(b)));
    group.bench_function("inv", |bench| bench.iter(|| black_box(a).inv()));
    group.finish();
}

fn exact(c: &mut Criterion) {
    bench_field(c, "rational", &rational(-21, 8), &rational(5, 12));
    let (a, b) = radical_sample();
    bench_field(c, "radical", &a, &b);
    let (a, b) = ratfunc_sample();
    bench_field(c, "ratfunc", &a, &b);
    let (a, b) = five_factor_sample();
    bench_field(c, "five_factors/ratfunc", &a, &b);
    // As the engine forms them: each energy difference inverted on its own, so it is registered
    // as a linear factor.
    let (fa, fb) = five_factor_fractions();
    bench_field(c, "five_factors/fraction", &fa, &fb);
    let mut group = c.benchmark_group("five_factors/fraction");
    group
        .sample_size(20)
        .measurement_time(Duration::from_secs(1))
        .warm_up_time(Duration::from_millis(300));
    let sum = fa.clone() + &fb;
    assert_eq!(sum.to_ratfunc(), a + &b);
    group.bench_function("cancel", |bench| bench.iter(|| black_box(&sum).to_ratfunc()));
    group.finish();
}

/// The benchmark group, in a private module because `criterion_group!` generates a function
/// without docs.
mod group {
    criterion::criterion_group!(benches, super::exact);
}

criterion_main!(group::benches);
