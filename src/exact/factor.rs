//! Factoring integer and rational polynomials into irreducible factors over the rationals, in
//! polynomial time for all but adversarial inputs. Start from [`irreducible_factors`].
//!
//! The method is Zassenhaus's (von zur Gathen & Gerhard, Modern Computer Algebra, 3rd ed., 2013,
//! §15.6, Algorithm 15.19; Cohen, A Course in Computational Algebraic Number Theory, 1993, §3.5):
//! the square-free primitive polynomial is factored modulo a small prime that keeps it
//! square-free (distinct-degree, then Cantor–Zassenhaus equal-degree factorization, ibid. §14.2
//! and §14.3), the modular factors are lifted by quadratic Hensel steps (ibid. Algorithm 15.10)
//! to a power of the prime beyond a Landau–Mignotte bound on the factors' coefficients (ibid.
//! Corollary 6.33), and products of lifted factors are confirmed by exact trial division.
//! Only the recombination can grow exponentially, with the number of modular factors; a budget on
//! it returns `None` instead of running on (the Swinnerton-Dyer polynomials are the classic case).

use num_bigint::{BigInt, BigUint, Sign};
use num_integer::Integer;
use num_traits::{One, Signed, ToPrimitive, Zero};

use super::univariate::UniPoly;
use super::{Field, Rational};

/// Candidate products tried in the recombination before giving up.
const RECOMBINATION_BUDGET: u64 = 100_000;

/// The monic irreducible factors over the rationals of a non-zero rational polynomial, each once
/// (the factorization of its square-free part), sorted by degree and then coefficients; `None`
/// when the recombination of modular factors exceeds its budget.
pub fn irreducible_factors(p: &UniPoly<Rational>) -> Option<Vec<UniPoly<Rational>>> {
    let p = p.square_free_part();
    let n = p.degree()?;
    if n <= 1 {
        return Some(if n == 1 { vec![p] } else { Vec::new() });
    }
    let f = primitive_integer(&p);
    let mut res = Vec::new();
    // A factor x is taken out first: modular factorization below wants f(0) != 0 for its cheap
    // rejection test, and x is trivially irreducible.
    let f = if f[0].is_zero() {
        res.push(UniPoly::new(vec![Rational::zero(), Rational::one()]));
        f[1..].to_vec()
    } else {
        f
    };
    for g in integer_factors(&f)? {
        let g: Vec<Rational> = g.into_iter().map(Rational::from_bigint).collect();
        res.push(UniPoly::new(g).monic());
    }
    res.sort_by(|a, b| a.degree().cmp(&b.degree()).then_with(|| a.coeffs().cmp(b.coeffs())));
    Some(res)
}

/// `p` times the least common denominator, divided by the content, with a positive leading
/// coefficient; coefficients from `x^0` up.
fn primitive_integer(p: &UniPoly<Rational>) -> Vec<BigInt> {
    let lcm = p.coeffs().iter().fold(BigInt::one(), |acc, c| c.denom_lcm(&acc));
    let ints: Vec<BigInt> =
        p.coeffs().iter().map(|c| c.numer() * (&lcm / c.denom())).collect::<Vec<_>>();
    let content = ints.iter().fold(BigInt::zero(), |acc, c| acc.gcd(c));
    let sign = if ints.last().is_some_and(|c| c.is_negative()) { -1 } else { 1 };
    ints.into_iter().map(|c| c / &content * sign).collect()
}

/// The irreducible factors over the integers of a primitive square-free `f` of degree at least 1
/// with a positive leading coefficient and `f(0) != 0`, each primitive with a positive leading
/// coefficient.
fn integer_factors(f: &[BigInt]) -> Option<Vec<Vec<BigInt>>> {
    let n = f.len() - 1;
    if n <= 1 {
        return Some(vec![f.to_vec()]);
    }
    let (prime, modular) = best_prime(f)?;
    if modular.len() == 1 {
        return Some(vec![f.to_vec()]);
    }
    let lead = f[n].clone();
    // Landau–Mignotte: a factor g of f has ||g||_inf <= 2^deg(g) ||f||_2, and the candidates below
    // are b g / lc(g) with b = lc(f), so their coefficients are below b 2^n ||f||_2.
    let norm2 = f.iter().map(|c| c * c).fold(BigInt::zero(), |a, b| a + b).sqrt() + 1;
    let bound: BigInt = &lead * (BigInt::one() << n) * norm2;
    let modulus_floor = bound * 2 + 1;
    let (lifted, modulus) = hensel_lift_all(f, &modular, prime, &modulus_floor);
    recombine(f, lifted, &modulus)
}

/// Small odd primes for the modular step.
fn primes() -> impl Iterator<Item = u64> {
    (3u64..).filter(|&k| (2..).take_while(|d| d * d <= k).all(|d| k % d != 0))
}

/// Tries a few primes that keep `f` square-free and do not divide its leading coefficient, and
/// keeps the one with the fewest modular factors (fewer factors, cheaper recombination).
fn best_prime(f: &[BigInt]) -> Option<(u64, Vec<Vec<u64>>)> {
    let mut best: Option<(u64, Vec<Vec<u64>>)> = None;
    let mut tried = 0;
    for prime in primes().take(400) {
        let fp = reduce(f, prime);
        if fp.len() != f.len() {
            continue; // The prime divides the leading coefficient.
        }
        let derivative = derivative_mod(&fp, prime);
        if gcd_mod(&fp, &derivative, prime).len() != 1 {
            continue; // Not square-free modulo the prime.
        }
        let factors = factor_mod(&fp, prime);
        if best.as_ref().map_or(true, |(_, b)| factors.len() < b.len()) {
            best = Some((prime, factors));
        }
        tried += 1;
        if tried == 5 {
            break;
        }
    }
    best
}

// ---------------------------------------------------------------------------------------------
// Polynomials modulo a small prime: coefficients in 0..p from x^0 up, no trailing zeros.

fn trim(mut a: Vec<u64>) -> Vec<u64> {
    while a.last() == Some(&0) {
        a.pop();
    }
    a
}

fn reduce(f: &[BigInt], p: u64) -> Vec<u64> {
    let pb = BigInt::from(p);
    trim(f.iter().map(|c| c.mod_floor(&pb).to_u64().expect("below p")).collect())
}

fn pow_mod_u64(mut base: u64, mut exp: u64, p: u64) -> u64 {
    let mut res = 1;
    base %= p;
    while exp > 0 {
        if exp & 1 == 1 {
            res = res * base % p;
        }
        base = base * base % p;
        exp >>= 1;
    }
    res
}

fn inv_mod(a: u64, p: u64) -> u64 {
    pow_mod_u64(a, p - 2, p)
}

fn sub_mod(a: &[u64], b: &[u64], p: u64) -> Vec<u64> {
    let mut res = vec![0; a.len().max(b.len())];
    for (i, r) in res.iter_mut().enumerate() {
        let x = a.get(i).copied().unwrap_or(0);
        let y = b.get(i).copied().unwrap_or(0);
        *r = (x + p - y) % p;
    }
    trim(res)
}

fn mul_mod(a: &[u64], b: &[u64], p: u64) -> Vec<u64> {
    if a.is_empty() || b.is_empty() {
        return Vec::new();
    }
    let mut res = vec![0; a.len() + b.len() - 1];
    for (i, x) in a.iter().enumerate() {
        for (j, y) in b.iter().enumerate() {
            res[i + j] = (res[i + j] + x * y) % p;
        }
    }
    trim(res)
}

/// Quotient and remainder of `a` by a non-zero `b`.
fn divrem_mod(a: &[u64], b: &[u64], p: u64) -> (Vec<u64>, Vec<u64>) {
    let db = b.len() - 1;
    if a.len() < b.len() {
        return (Vec::new(), a.to_vec());
    }
    let inv = inv_mod(b[db], p);
    let mut rem = a.to_vec();
    let mut quot = vec![0; a.len() - db];
    for k in (0..quot.len()).rev() {
        let c = rem[k + db] * inv % p;
        quot[k] = c;
        if c != 0 {
            for (j, y) in b.iter().enumerate() {
                rem[k + j] = (rem[k + j] + p - c * y % p) % p;
            }
        }
    }
    rem.truncate(db);
    (trim(quot), trim(rem))
}

fn monic_mod(a: &[u64], p: u64) -> Vec<u64> {
    let inv = inv_mod(*a.last().expect("non-zero"), p);
    a.iter().map(|c| c * inv % p).collect()
}

/// The monic greatest common divisor (empty for two zeros).
fn gcd_mod(a: &[u64], b: &[u64], p: u64) -> Vec<u64> {
    let (mut a, mut b) = (a.to_vec(), b.to_vec());
    while !b.is_empty() {
        let r = divrem_mod(&a, &b, p).1;
        a = b;
        b = r;
    }
    if a.is_empty() {
        a
    } else {
        monic_mod(&a, p)
    }
}

fn derivative_mod(a: &[u64], p: u64) -> Vec<u64> {
    trim(a.iter().enumerate().skip(1).map(|(k, c)| (k as u64 % p) * c % p).collect())
}

/// `base^exp mod modulus`.
fn pow_poly_mod(base: &[u64], exp: &BigUint, modulus: &[u64], p: u64) -> Vec<u64> {
    let mut res = vec![1];
    let base = divrem_mod(base, modulus, p).1;
    for bit in (0..exp.bits()).rev() {
        res = divrem_mod(&mul_mod(&res, &res, p), modulus, p).1;
        if exp.bit(bit) {
            res = divrem_mod(&mul_mod(&res, &base, p), modulus, p).1;
        }
    }
    res
}

/// The monic irreducible factors of a square-free `f` modulo `p` (leading coefficient dropped).
fn factor_mod(f: &[u64], p: u64) -> Vec<Vec<u64>> {
    let mut res = Vec::new();
    // Distinct-degree factorization: gcd(x^(p^d) - x, f) is the product of the factors of degree d.
    let mut rest = monic_mod(f, p);
    let x = vec![0, 1];
    let mut h = x.clone();
    let mut d = 0;
    let mut rng = 0x9e37_79b9_7f4a_7c15u64;
    while rest.len() > 1 {
        d += 1;
        if 2 * d > rest.len() - 1 {
            res.push(rest);
            break;
        }
        h = pow_poly_mod(&h, &BigUint::from(p), &rest, p);
        let g = gcd_mod(&sub_mod(&h, &x, p), &rest, p);
        if g.len() > 1 {
            equal_degree(&g, d, p, &mut rng, &mut res);
            rest = divrem_mod(&rest, &g, p).0;
            h = divrem_mod(&h, &rest, p).1;
        }
    }
    res
}

/// Cantor–Zassenhaus: splits a monic product of distinct irreducibles of degree `d` by
/// `gcd(a^((p^d - 1)/2) - 1, g)` for pseudo-random `a` (deterministic seed, so runs repeat).
fn equal_degree(g: &[u64], d: usize, p: u64, rng: &mut u64, res: &mut Vec<Vec<u64>>) {
    let n = g.len() - 1;
    if n == d {
        res.push(g.to_vec());
        return;
    }
    let exp = (BigUint::from(p).pow(d as u32) - 1u32) / 2u32;
    loop {
        let a: Vec<u64> = (0..n)
            .map(|_| {
                // xorshift64 (Marsaglia, Xorshift RNGs, 2003).
                *rng ^= *rng << 13;
                *rng ^= *rng >> 7;
                *rng ^= *rng << 17;
                *rng % p
            })
            .collect();
        let a = trim(a);
        if a.len() < 2 {
            continue;
        }
        let b = sub_mod(&pow_poly_mod(&a, &exp, g, p), &[1], p);
        let c = gcd_mod(&b, g, p);
        if c.len() > 1 && c.len() < g.len() {
            let other = divrem_mod(g, &c, p).0;
            equal_degree(&c, d, p, rng, res);
            equal_degree(&other, d, p, rng, res);
            return;
        }
    }
}

/// `s`, `t` with `s a + t b = 1` modulo `p` for coprime `a`, `b`.
fn bezout_mod(a: &[u64], b: &[u64], p: u64) -> (Vec<u64>, Vec<u64>) {
    let (mut r0, mut r1) = (a.to_vec(), b.to_vec());
    let (mut s0, mut s1) = (vec![1], Vec::new());
    let (mut t0, mut t1) = (Vec::new(), vec![1]);
    while !r1.is_empty() {
        let (q, r) = divrem_mod(&r0, &r1, p);
        let s = sub_mod(&s0, &mul_mod(&q, &s1, p), p);
        let t = sub_mod(&t0, &mul_mod(&q, &t1, p), p);
        (r0, r1) = (r1, r);
        (s0, s1) = (s1, s);
        (t0, t1) = (t1, t);
    }
    // r0 is a non-zero constant; scale to 1.
    let inv = inv_mod(r0[0], p);
    let scale = |v: Vec<u64>| trim(v.into_iter().map(|c| c * inv % p).collect());
    (scale(s0), scale(t0))
}

// ---------------------------------------------------------------------------------------------
// Polynomials modulo m = p^k with big coefficients in 0..m.

fn big_trim(mut a: Vec<BigInt>) -> Vec<BigInt> {
    while a.last().is_some_and(Zero::is_zero) {
        a.pop();
    }
    a
}

fn big_reduce(a: &[BigInt], m: &BigInt) -> Vec<BigInt> {
    big_trim(a.iter().map(|c| c.mod_floor(m)).collect())
}

fn big_add(a: &[BigInt], b: &[BigInt], m: &BigInt) -> Vec<BigInt> {
    let n = a.len().max(b.len());
    let zero = BigInt::zero();
    let sum: Vec<BigInt> =
        (0..n).map(|i| a.get(i).unwrap_or(&zero) + b.get(i).unwrap_or(&zero)).collect();
    big_reduce(&sum, m)
}

fn big_sub(a: &[BigInt], b: &[BigInt], m: &BigInt) -> Vec<BigInt> {
    let n = a.len().max(b.len());
    let zero = BigInt::zero();
    let diff: Vec<BigInt> =
        (0..n).map(|i| a.get(i).unwrap_or(&zero) - b.get(i).unwrap_or(&zero)).collect();
    big_reduce(&diff, m)
}

fn big_mul(a: &[BigInt], b: &[BigInt], m: &BigInt) -> Vec<BigInt> {
    if a.is_empty() || b.is_empty() {
        return Vec::new();
    }
    let mut res = vec![BigInt::zero(); a.len() + b.len() - 1];
    for (i, x) in a.iter().enumerate() {
        if x.is_zero() {
            continue;
        }
        for (j, y) in b.iter().enumerate() {
            res[i + j] += x * y;
        }
    }
    big_reduce(&res, m)
}

/// Quotient and remainder modulo `m` by a monic `b`.
fn big_divrem_monic(a: &[BigInt], b: &[BigInt], m: &BigInt) -> (Vec<BigInt>, Vec<BigInt>) {
    let db = b.len() - 1;
    if a.len() < b.len() {
        return (Vec::new(), big_reduce(a, m));
    }
    let mut rem = a.to_vec();
    let mut quot = vec![BigInt::zero(); a.len() - db];
    for k in (0..quot.len()).rev() {
        let c = rem[k + db].mod_floor(m);
        if !c.is_zero() {
            for (j, y) in b.iter().enumerate() {
                rem[k + j] -= &c * y;
            }
        }
        quot[k] = c;
    }
    rem.truncate(db);
    (big_reduce(&quot, m), big_reduce(&rem, m))
}

fn to_big(a: &[u64]) -> Vec<BigInt> {
    a.iter().map(|&c| BigInt::from(c)).collect()
}

/// One quadratic Hensel step (von zur Gathen & Gerhard, Algorithm 15.10): from `f = g h`,
/// `s g + t h = 1` modulo `m` with `h` monic to the same modulo `m^2`.
fn hensel_step(f: &[BigInt], [g, h, s, t]: [Vec<BigInt>; 4], m2: &BigInt) -> [Vec<BigInt>; 4] {
    let e = big_sub(f, &big_mul(&g, &h, m2), m2);
    let (q, r) = big_divrem_monic(&big_mul(&s, &e, m2), &h, m2);
    let g_new = big_add(&g, &big_add(&big_mul(&t, &e, m2), &big_mul(&q, &g, m2), m2), m2);
    let h_new = big_add(&h, &r, m2);
    let b = big_sub(
        &big_add(&big_mul(&s, &g_new, m2), &big_mul(&t, &h_new, m2), m2),
        &[BigInt::one()],
        m2,
    );
    let (c, d) = big_divrem_monic(&big_mul(&s, &b, m2), &h_new, m2);
    let s_new = big_sub(&s, &d, m2);
    let t_new = big_sub(&t, &big_add(&big_mul(&t, &b, m2), &big_mul(&c, &g_new, m2), m2), m2);
    [g_new, h_new, s_new, t_new]
}

/// Lifts `f = lc(f) u_1 ... u_r` modulo `p` to a modulus `p^(2^j)` above `floor`: each factor in
/// turn is split off the product of the rest by quadratic Hensel steps. Returns the lifted monic
/// factors and the modulus.
fn hensel_lift_all(
    f: &[BigInt],
    modular: &[Vec<u64>],
    p: u64,
    floor: &BigInt,
) -> (Vec<Vec<BigInt>>, BigInt) {
    let mut modulus = BigInt::from(p);
    let mut steps = 0;
    while modulus <= *floor {
        modulus = &modulus * &modulus;
        steps += 1;
    }
    let mut lifted = Vec::with_capacity(modular.len());
    let mut rest: Vec<BigInt> = f.to_vec();
    for (idx, u) in modular.iter().enumerate().take(modular.len() - 1) {
        let lead_p = reduce(&[rest.last().expect("non-zero").clone()], p);
        let mut g = lead_p;
        for other in &modular[idx + 1..] {
            g = mul_mod(&g, other, p);
        }
        let (s, t) = bezout_mod(&g, u, p);
        let mut state = [to_big(&g), to_big(u), to_big(&s), to_big(&t)];
        let mut m = BigInt::from(p);
        for _ in 0..steps {
            m = &m * &m;
            state = hensel_step(&rest, state, &m);
        }
        let [g, h, _, _] = state;
        lifted.push(h);
        rest = g;
    }
    // What is left is lc(f) u_r: divide by the leading coefficient modulo the modulus.
    let lead = rest.last().expect("non-zero").clone();
    let inv = mod_inverse(&lead, &modulus);
    lifted.push(big_reduce(&rest.iter().map(|c| c * &inv).collect::<Vec<_>>(), &modulus));
    (lifted, modulus)
}

/// The inverse of `a` modulo `m` (they are coprime: `m` is a power of a prime not dividing `a`).
fn mod_inverse(a: &BigInt, m: &BigInt) -> BigInt {
    let e = a.extended_gcd(m);
    e.x.mod_floor(m)
}

/// The symmetric representative in `(-m/2, m/2]`.
fn symmetric(c: &BigInt, m: &BigInt) -> BigInt {
    let r = c.mod_floor(m);
    if &r * 2 > *m {
        r - m
    } else {
        r
    }
}

/// Exact division of integer polynomials; `None` when `b` does not divide `a`.
fn exact_div(a: &[BigInt], b: &[BigInt]) -> Option<Vec<BigInt>> {
    let db = b.len() - 1;
    if a.len() < b.len() {
        return None;
    }
    let lead = &b[db];
    let mut rem = a.to_vec();
    let mut quot = vec![BigInt::zero(); a.len() - db];
    for k in (0..quot.len()).rev() {
        let (c, r) = rem[k + db].div_rem(lead);
        if !r.is_zero() {
            return None;
        }
        if !c.is_zero() {
            for (j, y) in b.iter().enumerate() {
                rem[k + j] -= &c * y;
            }
        }
        quot[k] = c;
    }
    rem.iter().all(Zero::is_zero).then_some(quot)
}

/// Zassenhaus's recombination (von zur Gathen & Gerhard, Algorithm 15.19, steps 6–9) with the
/// norm test replaced by exact trial division; subsets of growing size, a found factor removed
/// with its subset.
fn recombine(f: &[BigInt], lifted: Vec<Vec<BigInt>>, modulus: &BigInt) -> Option<Vec<Vec<BigInt>>> {
    let mut remaining = lifted;
    let mut rest = f.to_vec();
    let mut res = Vec::new();
    let mut size = 1;
    let mut budget = RECOMBINATION_BUDGET;
    'sizes: while 2 * size <= remaining.len() {
        let mut subset: Vec<usize> = (0..size).collect();
        loop {
            budget = budget.checked_sub(1)?;
            let lead = rest.last().expect("non-zero").clone();
            let mut candidate = vec![lead.clone()];
            for &k in &subset {
                candidate = big_mul(&candidate, &remaining[k], modulus);
            }
            let candidate: Vec<BigInt> = candidate.iter().map(|c| symmetric(c, modulus)).collect();
            // Cheap test first: the constant term of a factor of lc * rest divides lc * rest(0).
            let divides_constant =
                candidate[0].is_zero() || ((&lead * &rest[0]) % &candidate[0]).is_zero();
            if divides_constant {
                let g = primitive(&candidate);
                if let Some(quot) = exact_div(&rest, &g) {
                    res.push(g);
                    rest = quot;
                    let mut idx = 0;
                    remaining.retain(|_| {
                        idx += 1;
                        !subset.contains(&(idx - 1))
                    });
                    continue 'sizes;
                }
            }
            if !next_subset(&mut subset, remaining.len()) {
                break;
            }
        }
        size += 1;
    }
    res.push(primitive(&rest));
    Some(res)
}

/// Divided by the content, with a positive leading coefficient.
fn primitive(a: &[BigInt]) -> Vec<BigInt> {
    let content = a.iter().fold(BigInt::zero(), |acc, c| acc.gcd(c));
    let sign = if a.last().is_some_and(|c| c.sign() == Sign::Minus) { -1 } else { 1 };
    a.iter().map(|c| c / &content * sign).collect()
}

/// The next `k`-subset of `0..n` in lexicographic order; false after the last.
fn next_subset(subset: &mut [usize], n: usize) -> bool {
    let k = subset.len();
    for i in (0..k).rev() {
        if subset[i] < n - k + i {
            subset[i] += 1;
            for j in i + 1..k {
                subset[j] = subset[j - 1] + 1;
            }
            return true;
        }
    }
    false
}

#[cfg(test)]
mod tests {
    use super::*;

    fn poly(coeffs: &[i64]) -> UniPoly<Rational> {
        UniPoly::new(coeffs.iter().map(|&c| Rational::from_i64(c)).collect())
    }

    /// The n-th cyclotomic polynomial, from `x^n - 1 = prod_{d | n} Phi_d(x)` (a standard identity,
    /// e.g. Lang, Algebra, 2002, ch. VI §3) by exact division.
    fn cyclotomic(n: usize) -> UniPoly<Rational> {
        let mut coeffs = vec![Rational::zero(); n + 1];
        coeffs[0] = Rational::from_i64(-1);
        coeffs[n] = Rational::one();
        let mut p = UniPoly::new(coeffs);
        for d in 1..n {
            if n % d == 0 {
                p = p.divrem(&cyclotomic(d)).expect("non-zero").0;
            }
        }
        p
    }

    #[test]
    fn x_to_the_n_minus_one_splits_into_cyclotomic_polynomials() {
        // Phi_d for d | n are irreducible (Gauss; e.g. Lang, Algebra, ch. VI Theorem 3.1), so
        // the factors of x^n - 1 are exactly they.
        for n in [6usize, 12, 15, 30, 36, 60, 105] {
            let mut coeffs = vec![Rational::zero(); n + 1];
            coeffs[0] = Rational::from_i64(-1);
            coeffs[n] = Rational::one();
            let factors = irreducible_factors(&UniPoly::new(coeffs)).expect("factors");
            let mut expected: Vec<UniPoly<Rational>> =
                (1..=n).filter(|d| n % d == 0).map(cyclotomic).collect();
            expected.sort_by(|a, b| {
                a.degree().cmp(&b.degree()).then_with(|| a.coeffs().cmp(b.coeffs()))
            });
            assert_eq!(factors, expected, "x^{n} - 1");
        }
    }

    #[test]
    fn swinnerton_dyer_polynomials_are_irreducible() {
        // S_2 = x^4 - 10x^2 + 1 (minimal polynomial of sqrt 2 + sqrt 3) and S_3, the minimal
        // polynomial of sqrt 2 + sqrt 3 + sqrt 5: x^8 - 40x^6 + 352x^4 - 960x^2 + 576
        // (Swinnerton-Dyer; values as given in von zur Gathen & Gerhard, §15.3; from memory).
        // Irreducible, yet they split into factors of degree at most 2 modulo every prime.
        for p in [poly(&[1, 0, -10, 0, 1]), poly(&[576, 0, -960, 0, 352, 0, -40, 0, 1])] {
            let factors = irreducible_factors(&p).expect("within budget");
            assert_eq!(factors, vec![p.monic()]);
        }
    }

    #[test]
    fn a_product_of_known_factors_is_recovered() {
        // (x^3 + x^2 - 2x - 1)(x^3 - x^2 - 2x + 1)(3x^2 - 7)(x + 5)/4, expanded exactly.
        let parts =
            [poly(&[-1, -2, 1, 1]), poly(&[1, -2, -1, 1]), poly(&[-7, 0, 3]), poly(&[5, 1])];
        let product = parts
            .iter()
            .fold(UniPoly::one(), |acc, p| acc * p)
            .scale(&Rational::ratio(1, 4).expect("4 != 0"));
        let mut expected: Vec<UniPoly<Rational>> = parts.iter().map(UniPoly::monic).collect();
        expected
            .sort_by(|a, b| a.degree().cmp(&b.degree()).then_with(|| a.coeffs().cmp(b.coeffs())));
        assert_eq!(irreducible_factors(&product).expect("factors"), expected);
    }

    #[test]
    fn a_factor_x_and_repeated_factors() {
        // x^2 (x^2 - 2)^3: square-free part x (x^2 - 2).
        let p = poly(&[0, 0, 1]) * poly(&[-2, 0, 1]) * poly(&[-2, 0, 1]) * poly(&[-2, 0, 1]);
        assert_eq!(
            irreducible_factors(&p).expect("factors"),
            vec![poly(&[0, 1]), poly(&[-2, 0, 1])]
        );
    }
}
