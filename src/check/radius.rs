//! The radius of convergence of an energy branch from the exceptional points of
//! `H(lambda) = A_0 + lambda A_1 + lambda^2 A_2 + ...` continued to complex `lambda`.
//!
//! A branch `E(lambda)` is analytic until, continued along a ray from the origin, it meets another
//! eigenvalue at an exceptional point (a square-root branch point where the two eigenvalues and
//! their eigenvectors coalesce); its Taylor series converges up to the nearest such point
//! (Kato, Perturbation Theory for Linear Operators, 1966, ch. II §1; Baker & Graves-Morris, Padé
//! Approximants, 1996, §1.1). Eigenvalues that merely cross (diabolic points, symmetry
//! crossings) stay analytic and do not count.
//!
//! The search follows the branch numerically along rays in the upper half plane (the points come
//! in conjugate pairs because `A_k` are Hermitian), refines every close approach of two
//! eigenvalues by Newton's method on the square of their difference, keeps a point only when
//! circling it swaps the two eigenvalues, and only when the branch followed along the point's
//! own ray is one of the two.

use std::collections::BTreeMap;

use nalgebra::DMatrix;

/// A complex number of `f64` parts.
type Complex64 = nalgebra::Complex<f64>;

/// Largest product space whose exceptional points are searched.
pub const MAX_RADIUS_DIMENSION: usize = 300;

/// The eigenvalues of `H(lambda)` for complex `lambda`, remembered across branches.
pub struct Spectra {
    operators: Vec<DMatrix<Complex64>>,
    cache: BTreeMap<(u64, u64), Vec<Complex64>>,
    /// The size of the energies, for tolerances.
    pub scale: f64,
}

impl Spectra {
    /// `operators[k]` is the coefficient of `lambda^k`.
    pub fn new(operators: Vec<DMatrix<Complex64>>, scale: f64) -> Spectra {
        Spectra { operators, cache: BTreeMap::new(), scale }
    }
    fn at(&mut self, lambda: Complex64) -> Vec<Complex64> {
        let key = (lambda.re.to_bits(), lambda.im.to_bits());
        if let Some(v) = self.cache.get(&key) {
            return v.clone();
        }
        let mut h = self.operators[0].clone();
        let mut power = Complex64::new(1.0, 0.0);
        for op in &self.operators[1..] {
            power *= lambda;
            h += op * power;
        }
        let eig: Vec<Complex64> =
            h.eigenvalues().map(|v| v.as_slice().to_vec()).unwrap_or_default();
        self.cache.insert(key, eig.clone());
        eig
    }
}

/// What the search found for one branch.
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum Radius {
    /// The nearest exceptional point the branch meets, at this `|lambda|`.
    At(f64),
    /// None within this `|lambda|`: the radius is at least that.
    Beyond(f64),
}

/// Follows the eigenvalue from `start_value` at `start` along the straight path to `end`;
/// returns the eigenvalue reached, or `None` when it could not be followed unambiguously.
fn follow(
    spectra: &mut Spectra,
    start: Complex64,
    start_value: Complex64,
    end: Complex64,
) -> Option<Complex64> {
    let (mut t, mut value, mut prev) = (0.0f64, start_value, None::<(f64, Complex64)>);
    let mut step = 0.02f64;
    let tol = 1e-10 * spectra.scale;
    while t < 1.0 {
        let next_t = (t + step).min(1.0);
        let lambda = start + (end - start) * next_t;
        let predicted = match prev {
            Some((pt, pv)) if t > pt => value + (value - pv) * ((next_t - t) / (t - pt)),
            _ => value,
        };
        let eig = spectra.at(lambda);
        let mut dist: Vec<(f64, Complex64)> =
            eig.iter().map(|e| ((e - predicted).norm(), *e)).collect();
        dist.sort_by(|a, b| a.0.total_cmp(&b.0));
        let nearest = dist.first()?;
        // The next distinct eigenvalue (a permanently degenerate partner is the same branch).
        let second = dist.iter().skip(1).find(|d| (d.1 - nearest.1).norm() > tol);
        let clear = second.map_or(true, |s| nearest.0 < 0.3 * s.0);
        if clear {
            prev = Some((t, value));
            t = next_t;
            value = nearest.1;
            step = (step * 1.5).min(0.05);
        } else {
            step *= 0.5;
            if step < 1e-7 {
                return None;
            }
        }
    }
    Some(value)
}

/// The two eigenvalues nearest `center` at `lambda`.
fn pair_near(
    spectra: &mut Spectra,
    lambda: Complex64,
    center: Complex64,
) -> Option<[Complex64; 2]> {
    let mut eig = spectra.at(lambda);
    eig.sort_by(|a, b| (a - center).norm().total_cmp(&(b - center).norm()));
    (eig.len() >= 2).then(|| [eig[0], eig[1]])
}

/// Newton's method on `g(lambda) = (E_a - E_b)^2`, analytic near an exceptional point where it
/// has a simple zero; returns the point and the eigenvalue there.
fn refine(
    spectra: &mut Spectra,
    mut lambda: Complex64,
    mut center: Complex64,
) -> Option<(Complex64, Complex64)> {
    let g = |spectra: &mut Spectra, l: Complex64, c: Complex64| -> Option<(Complex64, Complex64)> {
        let [a, b] = pair_near(spectra, l, c)?;
        Some(((a - b) * (a - b), (a + b) * 0.5))
    };
    for _ in 0..40 {
        let h = 1e-6 * lambda.norm().max(1e-12);
        let (g0, c0) = g(spectra, lambda, center)?;
        let (gp, _) = g(spectra, lambda + h, c0)?;
        let (gm, _) = g(spectra, lambda - h, c0)?;
        let derivative = (gp - gm) / (2.0 * h);
        if derivative.norm() == 0.0 {
            return None;
        }
        let delta = g0 / derivative;
        lambda -= delta;
        center = c0;
        if !lambda.re.is_finite() || !lambda.im.is_finite() {
            return None;
        }
        if delta.norm() < 1e-11 * lambda.norm() {
            let (_, c) = g(spectra, lambda, center)?;
            return Some((lambda, c));
        }
    }
    None
}

/// Whether circling `point` once swaps the two eigenvalues meeting there (a branch point).
fn swaps(spectra: &mut Spectra, point: Complex64, value: Complex64) -> bool {
    let radius = 1e-3 * point.norm();
    let on_circle =
        |k: usize| point + Complex64::from_polar(radius, k as f64 * std::f64::consts::TAU / 64.0);
    let Some([a, b]) = pair_near(spectra, on_circle(0), value) else { return false };
    let mut current = a;
    for k in 1..=64 {
        let Some(next) = follow(spectra, on_circle(k - 1), current, on_circle(k)) else {
            return false;
        };
        current = next;
    }
    (current - b).norm() < (current - a).norm()
}

/// The radius of convergence of the branch that starts as `series` (coefficients of `lambda^k`,
/// accurate at `|lambda| = start`), searched up to `|lambda| = limit`.
pub fn branch_radius(spectra: &mut Spectra, series: &[f64], start: f64, limit: f64) -> Radius {
    let value_at = |lambda: Complex64| -> Complex64 {
        series.iter().rev().fold(Complex64::new(0.0, 0.0), |acc, c| acc * lambda + c)
    };
    let n_rays = 16;
    let mut candidates: Vec<(Complex64, Complex64)> = Vec::new();
    for j in 1..n_rays {
        let direction = Complex64::from_polar(1.0, std::f64::consts::PI * j as f64 / n_rays as f64);
        let mut r = start;
        let mut value = value_at(direction * r);
        let mut track: Vec<(f64, f64, Complex64)> = Vec::new();
        while r < limit {
            let next_r = (r * 1.08).min(limit);
            let Some(v) = follow(spectra, direction * r, value, direction * next_r) else {
                // Lost at a near-coalescence: that is itself a candidate.
                candidates.push((direction * next_r, value));
                break;
            };
            value = v;
            r = next_r;
            let eig = spectra.at(direction * r);
            let tol = 1e-9 * spectra.scale;
            let gap = eig
                .iter()
                .map(|e| (e - value).norm())
                .filter(|d| *d > tol)
                .fold(f64::INFINITY, f64::min);
            track.push((r, gap, value));
        }
        for w in track.windows(3) {
            if w[1].1 < w[0].1 && w[1].1 <= w[2].1 {
                candidates.push((direction * w[1].0, w[1].2));
            }
        }
    }
    let mut best: Option<f64> = None;
    let mut points: Vec<Complex64> = Vec::new();
    for (lambda, value) in candidates {
        let Some((point, at_point)) = refine(spectra, lambda, value) else { continue };
        let point = if point.im < 0.0 { point.conj() } else { point };
        let r = point.norm();
        if r > limit || r < 1e-3 * start || points.iter().any(|p| (p - point).norm() < 1e-6 * r) {
            continue;
        }
        points.push(point);
        if best.is_some_and(|b| b <= r) {
            continue;
        }
        if !swaps(spectra, point, at_point) {
            continue;
        }
        // Does the branch, continued along this point's ray, arrive as one of the two?
        let direction = point / r;
        let near = direction * (r * 0.99);
        let Some(arrived) = follow(spectra, direction * start, value_at(direction * start), near)
        else {
            continue;
        };
        if let Some([a, b]) = pair_near(spectra, near, at_point) {
            let tol = 1e-9 * spectra.scale;
            if (arrived - a).norm() <= tol.max(1e-6 * (a - b).norm())
                || (arrived - b).norm() <= tol.max(1e-6 * (a - b).norm())
            {
                best = Some(r);
            }
        }
    }
    match best {
        Some(r) => Radius::At(r),
        None => Radius::Beyond(limit),
    }
}
