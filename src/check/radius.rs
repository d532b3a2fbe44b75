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
        let eig = complex_eigenvalues(h).unwrap_or_default();
        self.cache.insert(key, eig.clone());
        eig
    }
}

/// The eigenvalues of a complex matrix: Hessenberg reduction (nalgebra), then single-shift QR
/// steps with Wilkinson shifts and deflation (Golub & Van Loan, Matrix Computations, 4th ed.
/// 2013, §7.5), with an exceptional shift every eleventh step; `None` when it does not converge.
fn complex_eigenvalues(m: DMatrix<Complex64>) -> Option<Vec<Complex64>> {
    let n = m.nrows();
    if n == 0 {
        return Some(Vec::new());
    }
    let mut h = nalgebra::linalg::Hessenberg::new(m).h();
    let zero = Complex64::new(0.0, 0.0);
    let mut eig = Vec::with_capacity(n);
    let mut hi = n;
    let mut iter = 0usize;
    let mut total = 0usize;
    while hi > 0 {
        // The start of the active block: the lowest negligible subdiagonal entry.
        let mut l = hi - 1;
        while l > 0 {
            let size = h[(l - 1, l - 1)].norm() + h[(l, l)].norm();
            if h[(l, l - 1)].norm() <= f64::EPSILON * size.max(f64::MIN_POSITIVE) {
                h[(l, l - 1)] = zero;
                break;
            }
            l -= 1;
        }
        if l == hi - 1 {
            eig.push(h[(hi - 1, hi - 1)]);
            hi -= 1;
            iter = 0;
            continue;
        }
        iter += 1;
        total += 1;
        if total > 60 * n + 200 {
            return None;
        }
        let (a, b, c, d) =
            (h[(hi - 2, hi - 2)], h[(hi - 2, hi - 1)], h[(hi - 1, hi - 2)], h[(hi - 1, hi - 1)]);
        let half = (a - d) * 0.5;
        let root = (half * half + b * c).sqrt();
        let (mu1, mu2) = ((a + d) * 0.5 + root, (a + d) * 0.5 - root);
        let mut mu = if (mu1 - d).norm() < (mu2 - d).norm() { mu1 } else { mu2 };
        if iter % 11 == 0 {
            mu = d + Complex64::new(0.75 * c.norm(), 0.43 * c.norm());
        }
        for k in l..hi {
            h[(k, k)] -= mu;
        }
        let mut rotations = Vec::with_capacity(hi - l);
        for k in l..hi - 1 {
            let (x, y) = (h[(k, k)], h[(k + 1, k)]);
            let r = (x.norm_sqr() + y.norm_sqr()).sqrt();
            let (cs, sn) = if r == 0.0 { (Complex64::new(1.0, 0.0), zero) } else { (x / r, y / r) };
            for j in k..hi {
                let (p, q) = (h[(k, j)], h[(k + 1, j)]);
                h[(k, j)] = cs.conj() * p + sn.conj() * q;
                h[(k + 1, j)] = -sn * p + cs * q;
            }
            rotations.push((cs, sn));
        }
        for (offset, (cs, sn)) in rotations.into_iter().enumerate() {
            let k = l + offset;
            for i in l..hi.min(k + 2) {
                let (p, q) = (h[(i, k)], h[(i, k + 1)]);
                h[(i, k)] = p * cs + q * sn;
                h[(i, k + 1)] = -p * sn.conj() + q * cs.conj();
            }
        }
        for k in l..hi {
            h[(k, k)] += mu;
        }
    }
    Some(eig)
}

/// The operators cut into the blocks that no operator connects (symmetry sectors, often):
/// eigenvalues of different blocks cross freely, and within one block a crossing is avoided.
pub struct Blocks {
    blocks: Vec<Spectra>,
}

impl Blocks {
    /// Splits `operators` (each `n x n`) into connected blocks; blocks larger than
    /// [`MAX_RADIUS_DIMENSION`] are left out.
    pub fn new(operators: &[DMatrix<Complex64>], scale: f64) -> Blocks {
        let n = operators.first().map_or(0, |m| m.nrows());
        let mut parent: Vec<usize> = (0..n).collect();
        fn root(parent: &mut [usize], mut i: usize) -> usize {
            while parent[i] != i {
                parent[i] = parent[parent[i]];
                i = parent[i];
            }
            i
        }
        for op in operators {
            for r in 0..n {
                for c in 0..n {
                    if op[(r, c)].norm() != 0.0 {
                        let (a, b) = (root(&mut parent, r), root(&mut parent, c));
                        parent[a] = b;
                    }
                }
            }
        }
        let mut members: BTreeMap<usize, Vec<usize>> = BTreeMap::new();
        for i in 0..n {
            let r = root(&mut parent, i);
            members.entry(r).or_default().push(i);
        }
        let blocks = members
            .into_values()
            .filter(|idx| idx.len() <= MAX_RADIUS_DIMENSION)
            .map(|idx| {
                let ops = operators
                    .iter()
                    .map(|m| DMatrix::from_fn(idx.len(), idx.len(), |r, c| m[(idx[r], idx[c])]))
                    .collect();
                Spectra::new(ops, scale)
            })
            .collect();
        Blocks { blocks }
    }
    /// The block with an eigenvalue nearest `value` at `lambda`; `None` when that block was left
    /// out (too large).
    pub fn block_of(&mut self, lambda: f64, value: f64) -> Option<&mut Spectra> {
        let target = Complex64::new(value, 0.0);
        let l = Complex64::new(lambda, 0.0);
        let best = (0..self.blocks.len()).min_by(|&a, &b| {
            let da = self.blocks[a]
                .at(l)
                .iter()
                .map(|e| (e - target).norm())
                .fold(f64::INFINITY, f64::min);
            let db = self.blocks[b]
                .at(l)
                .iter()
                .map(|e| (e - target).norm())
                .fold(f64::INFINITY, f64::min);
            da.total_cmp(&db)
        })?;
        Some(&mut self.blocks[best])
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
    // Callers pass short segments; a step is a fraction of the segment.
    let mut step = 0.25f64;
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
            step = (step * 1.5).min(0.5);
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
        let mut delta = g0 / derivative;
        // Damped: a zero far from the candidate belongs to another candidate.
        if delta.norm() > 0.2 * lambda.norm() {
            delta *= 0.2 * lambda.norm() / delta.norm();
        }
        lambda -= delta;
        center = c0;
        if !lambda.re.is_finite() || !lambda.im.is_finite() {
            return None;
        }
        if delta.norm() < 1e-10 * lambda.norm() {
            let (_, c) = g(spectra, lambda, center)?;
            return Some((lambda, c));
        }
    }
    None
}

/// [`follow`] over a long path, in short segments.
fn follow_far(
    spectra: &mut Spectra,
    start: Complex64,
    mut value: Complex64,
    end: Complex64,
) -> Option<Complex64> {
    let n = 64;
    for k in 0..n {
        let a = start + (end - start) * (k as f64 / n as f64);
        let b = start + (end - start) * ((k + 1) as f64 / n as f64);
        value = follow(spectra, a, value, b)?;
    }
    Some(value)
}

/// The minimum over `r` in `range` of the gap between the two eigenvalues nearest the branch
/// along the real ray `direction`, by golden-section search: `(r, gap)`.
fn axis_minimum(
    spectra: &mut Spectra,
    direction: Complex64,
    range: (f64, f64),
    value: Complex64,
) -> Option<(f64, f64)> {
    let mut center = value;
    let mut gap = |spectra: &mut Spectra, r: f64| -> Option<f64> {
        let [a, b] = pair_near(spectra, direction * r, center)?;
        center = (a + b) * 0.5;
        Some((a - b).norm())
    };
    let phi = 0.618_033_988_749_895;
    let (mut lo, mut hi) = range;
    let mut x1 = hi - phi * (hi - lo);
    let mut x2 = lo + phi * (hi - lo);
    let (mut f1, mut f2) = (gap(spectra, x1)?, gap(spectra, x2)?);
    for _ in 0..80 {
        if f1 < f2 {
            hi = x2;
            (x2, f2) = (x1, f1);
            x1 = hi - phi * (hi - lo);
            f1 = gap(spectra, x1)?;
        } else {
            lo = x1;
            (x1, f1) = (x2, f2);
            x2 = lo + phi * (hi - lo);
            f2 = gap(spectra, x2)?;
        }
    }
    Some(if f1 < f2 { (x1, f1) } else { (x2, f2) })
}

/// Whether circling `point` once swaps the two eigenvalues meeting there (a branch point).
fn swaps(spectra: &mut Spectra, point: Complex64, value: Complex64) -> bool {
    // Small enough not to enclose the conjugate point as well.
    let radius = (1e-3 * point.norm()).min(0.5 * point.im.abs());
    if radius <= 1e-9 * point.norm() {
        return false;
    }
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
    // Starting points for Newton's method, the branch value there, and a radius that holds if
    // none of them leads to a confirmed point: a sharp avoided crossing on the real axis, whose
    // pair of exceptional points lies just off the axis, beyond that |lambda|.
    let mut candidates: Vec<(Vec<Complex64>, Complex64, Option<f64>)> = Vec::new();
    let tol = 1e-9 * spectra.scale;
    for j in 0..=n_rays {
        let on_axis = j == 0 || j == n_rays;
        let direction = Complex64::from_polar(1.0, std::f64::consts::PI * j as f64 / n_rays as f64);
        let mut r = start;
        let mut value = value_at(direction * r);
        let mut track: Vec<(f64, f64, Complex64)> = Vec::new();
        while r < limit {
            let next_r = (r * 1.08).min(limit);
            let Some(v) = follow(spectra, direction * r, value, direction * next_r) else {
                // Lost at a near-coalescence: that is itself a candidate.
                let fallback = on_axis.then_some(r);
                candidates.push((vec![direction * next_r], value, fallback));
                break;
            };
            value = v;
            r = next_r;
            let eig = spectra.at(direction * r);
            let gap = eig
                .iter()
                .map(|e| (e - value).norm())
                .filter(|d| *d > tol)
                .fold(f64::INFINITY, f64::min);
            track.push((r, gap, value));
        }
        for w in track.windows(3) {
            if !(w[1].1 < w[0].1 && w[1].1 <= w[2].1) {
                continue;
            }
            if !on_axis {
                candidates.push((vec![direction * w[1].0], w[1].2, None));
                continue;
            }
            // On the real axis the eigenvalues are real and Newton's method would stay there:
            // the gap is minimized along the axis, a crossing (gap zero) is no singularity, and
            // an avoided one starts Newton's method off the axis by about gap / slope.
            let Some((r_min, gap_min)) = axis_minimum(spectra, direction, (w[0].0, w[2].0), w[1].2)
            else {
                continue;
            };
            if gap_min <= tol {
                // Within one block a crossing is avoided, here too sharply to resolve: the pair
                // of points lies off the axis by less than f64 can see.
                candidates.push((Vec::new(), w[1].2, Some(r_min)));
                continue;
            }
            let slope = (w[0].1 + w[2].1) / (w[2].0 - w[0].0);
            let eta = if slope > 0.0 { gap_min / slope } else { 0.05 * r_min };
            let starts = [eta, 0.05 * r_min, 0.005 * r_min]
                .iter()
                .map(|e| direction * Complex64::new(r_min, *e))
                .collect();
            candidates.push((starts, w[1].2, Some(r_min)));
        }
    }
    let mut best: Option<f64> = None;
    let mut avoided: Option<f64> = None;
    let mut points: Vec<Complex64> = Vec::new();
    for (starts, value, fallback) in candidates {
        let mut confirmed = false;
        for lambda in starts {
            let Some((point, at_point)) = refine(spectra, lambda, value) else { continue };
            let point = if point.im < 0.0 { point.conj() } else { point };
            let r = point.norm();
            if r > limit || r < 2.0 * start {
                continue;
            }
            if points.iter().any(|p| (p - point).norm() < 1e-6 * r) {
                confirmed = true;
                continue;
            }
            if !swaps(spectra, point, at_point) {
                continue;
            }
            points.push(point);
            confirmed = true;
            if best.is_some_and(|b| b <= r) {
                continue;
            }
            // Does the branch, continued along this point's ray, arrive as one of the two?
            let direction = point / r;
            let near = direction * (r * 0.99);
            let from = direction * start;
            let Some(arrived) = follow_far(spectra, from, value_at(from), near) else { continue };
            if let Some([a, b]) = pair_near(spectra, near, at_point) {
                if (arrived - a).norm() <= tol || (arrived - b).norm() <= tol {
                    best = Some(r);
                }
            }
        }
        if let (false, Some(f)) = (confirmed, fallback) {
            if f >= 2.0 * start {
                avoided = Some(avoided.map_or(f, |a| a.min(f)));
            }
        }
    }
    let best = match (best, avoided) {
        (Some(b), Some(a)) => Some(b.min(a)),
        (b, a) => b.or(a),
    };
    match best {
        Some(r) => Radius::At(r),
        None => Radius::Beyond(limit),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// A non-normal complex matrix with known eigenvalues 1, i and -2 (triangular before a
    /// similarity transform).
    #[test]
    fn complex_eigenvalues_of_a_similarity_transform() {
        let c = Complex64::new;
        let t = DMatrix::from_row_slice(
            3,
            3,
            &[
                c(1.0, 0.0),
                c(2.0, 1.0),
                c(0.5, 0.0),
                c(0.0, 0.0),
                c(0.0, 1.0),
                c(3.0, 0.0),
                c(0.0, 0.0),
                c(0.0, 0.0),
                c(-2.0, 0.0),
            ],
        );
        let s = DMatrix::from_fn(3, 3, |i, j| {
            c(if i == j { 2.0 } else { 0.3 * (i + 1) as f64 }, 0.1 * j as f64)
        });
        let m = &s * t * s.clone().try_inverse().expect("invertible");
        let mut eig = complex_eigenvalues(m).expect("converges");
        eig.sort_by(|a, b| a.re.total_cmp(&b.re).then(a.im.total_cmp(&b.im)));
        let expected = [c(-2.0, 0.0), c(0.0, 1.0), c(1.0, 0.0)];
        for (e, x) in eig.iter().zip(&expected) {
            assert!((e - x).norm() < 1e-10, "{eig:?}");
        }
    }
}
