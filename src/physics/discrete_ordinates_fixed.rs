//! The discrete-ordinate solution of [`super::discrete_ordinates`] for N ≤ 16 streams on
//! fixed-size arrays: the same equations, orders of work and boundary conditions (Stamnes,
//! Tsay, Wiscombe & Jayaweera [1]), without a heap allocation per layer or per solve.
//!
//! What differs from the general (nalgebra, any N) path is only how the small linear
//! algebra is done:
//!
//! - The n × n symmetric eigenproblem (n = N/2) is solved by the cyclic Jacobi method
//!   (Golub & Van Loan [2], § 8.5.2–8.5.3, from memory), to rounding.
//! - The 2n particular-solution equations ([1], eq. 12) are reduced to n equations in
//!   S = Z⁺ + Z⁻ with the matrix (α − β)(α + β) − μ0⁻² of the eigenproblem (the reduction of
//!   Stamnes & Swanson [3] applied to the inhomogeneous system): with r± the right-hand
//!   sides, [(α − β)(α + β) − μ0⁻²] S = μ0⁻¹(r⁺ − r⁻) + (α − β)(r⁺ + r⁻) and
//!   D = Z⁺ − Z⁻ = μ0((α + β)S − (r⁺ + r⁻)).
//! - The 2nL boundary-value equations are banded (lower and upper bandwidth 3n − 1; the
//!   band storage of DISORT [1]) and are solved by Gaussian elimination with partial
//!   pivoting restricted to the band (Golub & Van Loan [2], § 4.3.5, from memory).
//!
//! Which path is faster at which N is measured by `cargo bench --bench physics` (the
//! column-solve rows); the DISORT checks of `tests/physics_discrete_ordinates.rs` run at
//! 4, 8 and 16 streams on this path and at 32 on the general one.
//!
//! 1. Stamnes, K., Tsay, S.-C., Wiscombe, W. & Jayaweera, K. (1988), Appl. Opt. 27, 2502–2509.
//! 2. Golub, G. H. & Van Loan, C. F. (2013), Matrix Computations, 4th ed., Johns Hopkins.
//! 3. Stamnes, K. & Swanson, R. A. (1981), J. Atmos. Sci. 38, 387–399.

// Matrix code: the index loops follow the formulas' subscripts.
#![allow(clippy::needless_range_loop)]

use super::column::{ColumnFluxes, MAX_LAYERS};
use super::discrete_ordinates::{
    CONSERVATIVE_LIMIT, RESONANCE_WINDOW, ScatteringLayer, legendre_p,
};
use std::f64::consts::PI;

/// Largest number of streams solved on this path.
pub const MAX_FIXED_STREAMS: usize = 16;

/// The double-Gauss quadrature of F = 2H streams (H Gauss–Legendre points on [0, 1], as in
/// [`super::discrete_ordinates::Quadrature`]) and the Legendre polynomials at its angles.
#[derive(Debug, Clone)]
pub struct FixedQuadrature<const H: usize, const F: usize> {
    /// Cosines μ_i of the upward streams, ascending [unitless].
    mu: [f64; H],
    /// Weights w_i on [0, 1] (sum 1) [unitless].
    weight: [f64; H],
    /// w_i μ_i [unitless].
    wmu: [f64; H],
    /// (2l + 1) P_l(μ_i), l = 0..F−1.
    legendre: [[f64; H]; F],
}

impl<const H: usize, const F: usize> Default for FixedQuadrature<H, F> {
    fn default() -> Self {
        Self::new()
    }
}

impl<const H: usize, const F: usize> FixedQuadrature<H, F> {
    /// The quadrature of F = 2H streams.
    ///
    /// Panics unless F = 2H and 1 ≤ H ≤ [`MAX_FIXED_STREAMS`]/2 (a programming error).
    pub fn new() -> Self {
        assert!(F == 2 * H && (1..=MAX_FIXED_STREAMS / 2).contains(&H));
        let (x, w) = super::diurnal::gauss_legendre(H);
        let mut mu = [0.0; H];
        let mut weight = [0.0; H];
        let mut wmu = [0.0; H];
        for i in 0..H {
            mu[i] = 0.5 * (1.0 + x[i]);
            weight[i] = 0.5 * w[i];
            wmu[i] = weight[i] * mu[i];
        }
        let mut legendre = [[0.0; H]; F];
        for (l, row) in legendre.iter_mut().enumerate() {
            for i in 0..H {
                row[i] = (2 * l + 1) as f64 * legendre_p(l, mu[i]);
            }
        }
        Self {
            mu,
            weight,
            wmu,
            legendre,
        }
    }
}

/// The sun-independent solutions of one layer (see [`super::discrete_ordinates::LayerModes`]).
#[derive(Debug, Clone, Copy)]
pub struct FixedModes<const H: usize, const F: usize> {
    /// False if the optics had a NaN (the fluxes are then NaN).
    valid: bool,
    /// Unscaled optical depth [unitless].
    tau: f64,
    /// Delta-M scaled optical depth τ′ [unitless].
    tau_scaled: f64,
    /// Scaled single-scattering albedo ω′ [unitless].
    ssa_scaled: f64,
    /// Scaled moments χ′_l, l = 0..F−1.
    moments: [f64; F],
    /// Eigenvalues k_j [unitless]; 0 for the conservative pair.
    k: [f64; H],
    /// α + β, α − β and (α − β)(α + β).
    apb: [[f64; H]; H],
    amb: [[f64; H]; H],
    product: [[f64; H]; H],
    /// Values of the 2H basis solutions (columns; first H decay downward, last H upward) at
    /// the layer's top and bottom; rows: the H upward then the H downward intensities.
    at_top: [[f64; F]; F],
    at_bottom: [[f64; F]; F],
}

/// The n × n product a·b.
fn mat_mul<const H: usize>(a: &[[f64; H]; H], b: &[[f64; H]; H]) -> [[f64; H]; H] {
    let mut c = [[0.0; H]; H];
    for i in 0..H {
        for k in 0..H {
            let aik = a[i][k];
            for j in 0..H {
                c[i][j] += aik * b[k][j];
            }
        }
    }
    c
}

/// Solution of a x = b by Gaussian elimination with partial pivoting; `None` if a pivot
/// is 0 or not finite.
fn solve_dense<const H: usize>(mut a: [[f64; H]; H], mut b: [f64; H]) -> Option<[f64; H]> {
    for k in 0..H {
        let mut p = k;
        for r in k + 1..H {
            if a[r][k].abs() > a[p][k].abs() {
                p = r;
            }
        }
        if a[p][k] == 0.0 || !a[p][k].is_finite() {
            return None;
        }
        a.swap(k, p);
        b.swap(k, p);
        for r in k + 1..H {
            let f = a[r][k] / a[k][k];
            for c in k + 1..H {
                a[r][c] -= f * a[k][c];
            }
            b[r] -= f * b[k];
        }
    }
    for k in (0..H).rev() {
        let mut s = b[k];
        for c in k + 1..H {
            s -= a[k][c] * b[c];
        }
        b[k] = s / a[k][k];
    }
    Some(b)
}

/// Eigenvalues and orthonormal eigenvectors (the columns of the second value) of a
/// symmetric matrix by the cyclic Jacobi method (Golub & Van Loan [2] of the module
/// documentation, Algorithm 8.5.3, from memory): sweeps of plane rotations until no
/// off-diagonal element is above rounding relative to its diagonal pair.
fn symmetric_eigen<const H: usize>(mut a: [[f64; H]; H]) -> ([f64; H], [[f64; H]; H]) {
    let mut v = [[0.0; H]; H];
    for (i, row) in v.iter_mut().enumerate() {
        row[i] = 1.0;
    }
    for _sweep in 0..60 {
        let mut rotated = false;
        for p in 0..H {
            for q in p + 1..H {
                let apq = a[p][q];
                let scale = a[p][p].abs() + a[q][q].abs();
                if apq.abs() <= 1e-18 * scale || apq == 0.0 {
                    a[p][q] = 0.0;
                    a[q][p] = 0.0;
                    continue;
                }
                rotated = true;
                let theta = (a[q][q] - a[p][p]) / (2.0 * apq);
                let t = theta.signum() / (theta.abs() + (theta * theta + 1.0).sqrt());
                let c = 1.0 / (t * t + 1.0).sqrt();
                let s = t * c;
                for row in a.iter_mut() {
                    let (x, y) = (row[p], row[q]);
                    row[p] = c * x - s * y;
                    row[q] = s * x + c * y;
                }
                for k in 0..H {
                    let (x, y) = (a[p][k], a[q][k]);
                    a[p][k] = c * x - s * y;
                    a[q][k] = s * x + c * y;
                }
                for row in v.iter_mut() {
                    let (x, y) = (row[p], row[q]);
                    row[p] = c * x - s * y;
                    row[q] = s * x + c * y;
                }
            }
        }
        if !rotated {
            break;
        }
    }
    let mut values = [0.0; H];
    for (i, value) in values.iter_mut().enumerate() {
        *value = a[i][i];
    }
    (values, v)
}

/// Lower Cholesky factor of a symmetric positive-definite matrix; `None` if it is not.
fn cholesky<const H: usize>(a: &[[f64; H]; H]) -> Option<[[f64; H]; H]> {
    let mut l = [[0.0; H]; H];
    for j in 0..H {
        let mut d = a[j][j];
        for k in 0..j {
            d -= l[j][k] * l[j][k];
        }
        if d <= 0.0 || !d.is_finite() {
            return None;
        }
        let ljj = d.sqrt();
        l[j][j] = ljj;
        for i in j + 1..H {
            let mut s = a[i][j];
            for k in 0..j {
                s -= l[i][k] * l[j][k];
            }
            l[i][j] = s / ljj;
        }
    }
    Some(l)
}

impl<const H: usize, const F: usize> FixedModes<H, F> {
    /// Delta-M scaling and homogeneous solutions of `layer`, as
    /// [`super::discrete_ordinates::LayerModes::new`] (the same steps; see the module
    /// documentation of [`super::discrete_ordinates`]).
    ///
    /// - `layer`: optical properties; NaN-free values are clamped into their ranges
    /// - `quad`: the quadrature
    /// - `delta_m`: apply the delta-M scaling of Wiscombe (1977)
    pub fn new(layer: &ScatteringLayer, quad: &FixedQuadrature<H, F>, delta_m: bool) -> Self {
        let valid = !(layer.tau.is_nan()
            || layer.ssa.is_nan()
            || layer.rayleigh_share.is_nan()
            || layer.aerosol_g.is_nan());
        let tau = if layer.tau.is_finite() {
            layer.tau.max(0.0)
        } else {
            0.0
        };
        let mut ssa = layer.ssa.clamp(0.0, 1.0);
        let f = if delta_m { layer.phase_moment(F) } else { 0.0 };
        let mut moments = [0.0; F];
        for (l, m) in moments.iter_mut().enumerate() {
            *m = (layer.phase_moment(l) - f) / (1.0 - f);
        }
        let tau_scaled = (1.0 - ssa * f) * tau;
        ssa = ssa * (1.0 - f) / (1.0 - ssa * f);
        let conservative = 1.0 - ssa < CONSERVATIVE_LIMIT;
        if conservative {
            ssa = 1.0;
        }
        // Phase matrices D±_ij = (ω/2) Σ (2l+1) χ_l P_l(μ_i) P_l(±μ_j) ([1], eq. 7), and
        // A − W⁻¹ = D⁺ + D⁻ − W⁻¹ (even l), B − W⁻¹ = D⁺ − D⁻ − W⁻¹ (odd l).
        let p = &quad.legendre;
        let (mu, w) = (&quad.mu, &quad.weight);
        let mut dp = [[0.0; H]; H];
        let mut dm = [[0.0; H]; H];
        for i in 0..H {
            for j in 0..H {
                let (mut even, mut odd) = (0.0, 0.0);
                for l in 0..F {
                    let term = moments[l] * p[l][i] * p[l][j] / (2 * l + 1) as f64;
                    if l % 2 == 0 {
                        even += term;
                    } else {
                        odd += term;
                    }
                }
                dp[i][j] = 0.5 * ssa * (even + odd);
                dm[i][j] = 0.5 * ssa * (even - odd);
            }
        }
        let mut apb = [[0.0; H]; H];
        let mut amb = [[0.0; H]; H];
        for i in 0..H {
            for j in 0..H {
                let diag = if i == j { 1.0 } else { 0.0 };
                let alpha = (dp[i][j] * w[j] - diag) / mu[i];
                let beta = dm[i][j] * w[j] / mu[i];
                apb[i][j] = alpha + beta;
                amb[i][j] = alpha - beta;
            }
        }
        let product = mat_mul(&amb, &apb);
        // Symmetric form: X = C^½(B − W⁻¹)C^½, Y = C^½(A − W⁻¹)C^½, C = W M⁻¹.
        let mut c_half = [0.0; H];
        for i in 0..H {
            c_half[i] = (w[i] / mu[i]).sqrt();
        }
        let mut neg_x = [[0.0; H]; H];
        let mut neg_y = [[0.0; H]; H];
        for i in 0..H {
            for j in 0..H {
                let inv_w = if i == j { 1.0 / w[i] } else { 0.0 };
                let ch = c_half[i] * c_half[j];
                neg_x[i][j] = -ch * (dp[i][j] - dm[i][j] - inv_w);
                neg_y[i][j] = -ch * (dp[i][j] + dm[i][j] - inv_w);
            }
        }
        let (k2, s_vectors) = match cholesky(&neg_x) {
            Some(l) => {
                // Lᵀ(−Y)L, symmetric; y = L u, S = W⁻¹ C^½ y.
                let mut lt = [[0.0; H]; H];
                for i in 0..H {
                    for j in 0..H {
                        lt[i][j] = l[j][i];
                    }
                }
                let z = mat_mul(&mat_mul(&lt, &neg_y), &l);
                let (values, u) = symmetric_eigen(z);
                let y = mat_mul(&l, &u);
                let mut s = [[0.0; H]; H];
                for i in 0..H {
                    for j in 0..H {
                        s[i][j] = y[i][j] * c_half[i] / w[i];
                    }
                }
                (values.map(|v| v.max(0.0)), s)
            }
            None => {
                let mut sym = [[0.0; H]; H];
                for i in 0..H {
                    for j in 0..H {
                        sym[i][j] = 0.5 * (product[i][j] + product[j][i]);
                    }
                }
                let (values, vectors) = symmetric_eigen(sym);
                (values.map(|v| v.max(0.0)), vectors)
            }
        };
        // The conservative pair replaces the smallest eigenvalue.
        let zero_mode = if conservative {
            (0..H).min_by(|&a, &b| k2[a].total_cmp(&k2[b]))
        } else {
            None
        };
        let mut k = [0.0; H];
        let mut at_top = [[0.0; F]; F];
        let mut at_bottom = [[0.0; F]; F];
        for j in 0..H {
            if Some(j) == zero_mode {
                // (α − β) D = −2·1.
                let d = solve_dense(amb, [-2.0; H]).unwrap_or([0.0; H]);
                for i in 0..H {
                    // Constant solution.
                    at_top[i][j] = 1.0;
                    at_top[H + i][j] = 1.0;
                    at_bottom[i][j] = 1.0;
                    at_bottom[H + i][j] = 1.0;
                    // Linear solution (τ − τ_top) ± D/2.
                    at_top[i][H + j] = 0.5 * d[i];
                    at_top[H + i][H + j] = -0.5 * d[i];
                    at_bottom[i][H + j] = tau_scaled + 0.5 * d[i];
                    at_bottom[H + i][H + j] = tau_scaled - 0.5 * d[i];
                }
                continue;
            }
            let kj = k2[j].sqrt();
            k[j] = kj;
            let e = (-kj * tau_scaled).exp();
            for i in 0..H {
                let mut d = 0.0;
                for m in 0..H {
                    d += apb[i][m] * s_vectors[m][j];
                }
                d /= kj;
                let s = s_vectors[i][j];
                let gp = 0.5 * (s + d);
                let gm = 0.5 * (s - d);
                // Decaying downward: G(k) e^(−k(τ − τ_top)).
                at_top[i][j] = gp;
                at_top[H + i][j] = gm;
                at_bottom[i][j] = gp * e;
                at_bottom[H + i][j] = gm * e;
                // Decaying upward: G(−k) e^(−k(τ_bottom − τ)), G(−k) = (G⁻, G⁺).
                at_top[i][H + j] = gm * e;
                at_top[H + i][H + j] = gp * e;
                at_bottom[i][H + j] = gm;
                at_bottom[H + i][H + j] = gp;
            }
        }
        Self {
            valid,
            tau,
            tau_scaled,
            ssa_scaled: ssa,
            moments,
            k,
            apb,
            amb,
            product,
            at_top,
            at_bottom,
        }
    }

    /// Eigenvalues k_j of the homogeneous solutions [unitless]; 0 for the conservative pair.
    pub fn eigenvalues(&self) -> &[f64; H] {
        &self.k
    }

    /// Smallest relative distance |k μ0 − 1| of the layer's eigenvalues from the resonance.
    fn resonance_distance(&self, mu0: f64) -> (f64, f64) {
        self.k
            .iter()
            .filter(|&&k| k > 0.0)
            .map(|&k| ((k * mu0 - 1.0).abs(), k))
            .fold((f64::INFINITY, 0.0), |a, b| if b.0 < a.0 { b } else { a })
    }

    /// Particular solution Z (upward then downward) at the layer's top for a beam of flux
    /// F0 = 1/μ0 that has reached the top with e^(−τ′_above/μ0) ([1], eq. 12, reduced to H
    /// equations as in the module documentation).
    fn particular(&self, quad: &FixedQuadrature<H, F>, pm0: &[f64; F], mu0: f64) -> [f64; F] {
        let mut z = [0.0; F];
        if self.ssa_scaled == 0.0 {
            return z;
        }
        let c = 1.0 / mu0;
        // r± = −(ω′ F0/4π) Σ (2l+1) χ′_l P_l(±μ_i) P_l(−μ0) / μ_i (the beam factor is
        // applied by the caller).
        let mut sum = [0.0; H];
        let mut diff = [0.0; H];
        let scale = -self.ssa_scaled * c / (4.0 * PI);
        for i in 0..H {
            let (mut even, mut odd) = (0.0, 0.0);
            for l in 0..F {
                let term = self.moments[l] * quad.legendre[l][i] * pm0[l];
                if l % 2 == 0 {
                    even += term;
                } else {
                    odd += term;
                }
            }
            let s = scale / quad.mu[i];
            // r⁺ + r⁻ = 2 s·even, r⁺ − r⁻ = 2 s·odd.
            sum[i] = 2.0 * s * even;
            diff[i] = 2.0 * s * odd;
        }
        let mut a = self.product;
        let mut b = [0.0; H];
        for i in 0..H {
            a[i][i] -= c * c;
            let mut t = c * diff[i];
            for m in 0..H {
                t += self.amb[i][m] * sum[m];
            }
            b[i] = t;
        }
        let Some(s) = solve_dense(a, b) else {
            return z;
        };
        for i in 0..H {
            let mut t = -sum[i];
            for m in 0..H {
                t += self.apb[i][m] * s[m];
            }
            let d = mu0 * t;
            z[i] = 0.5 * (s[i] + d);
            z[H + i] = 0.5 * (s[i] - d);
        }
        z
    }
}

/// Work arrays of [`solve_fixed`], reused across calls: the factored boundary-value matrix
/// of the last column solved with them, kept with what it was made from, so that a column of
/// the same layers and diffuse albedo at another sun position (or at the two sides of a
/// resonance) is solved without factoring again.
#[derive(Debug, Default, Clone)]
pub struct FixedWork {
    /// LU factors of the boundary-value matrix (row-major; L below the diagonal, by the
    /// position of its row at the elimination step, as in LAPACK's banded storage).
    lu: Vec<f64>,
    /// Row interchange of each elimination step.
    pivots: Vec<usize>,
    /// Whether `lu` holds a regular factorization.
    regular: bool,
    /// What `lu` was made from: the diffuse albedo, then per layer τ′, ω′ and χ′_l (these
    /// determine the homogeneous solutions); empty before the first factorization.
    key: Vec<f64>,
    rhs: Vec<f64>,
    beam: Vec<f64>,
    transmission: Vec<f64>,
    z_top: Vec<f64>,
}

/// Fluxes of a stack of layers (top first) over a surface that reflects isotropically with
/// one albedo for the beam and another for diffuse light, as
/// [`super::discrete_ordinates::solve_modes_surface`] (the same solution, on this path).
///
/// - `layers`: the layers' modes, top first (at most [`MAX_LAYERS`] are reported in
///   `layer_absorption`; all are solved)
/// - `mu0`: cosine of the solar zenith angle [unitless, (0, 1]]
/// - `albedo_beam`, `albedo_diffuse`: [unitless, 0–1]
/// - `work`: work arrays (any contents; a factorization they hold is reused only for the
///   same layers and diffuse albedo)
///
/// Returns all zeros for μ0 ≤ 0 or NaN, all NaN if a layer's optics are NaN.
pub fn solve_fixed<const H: usize, const F: usize>(
    layers: &[&FixedModes<H, F>],
    quad: &FixedQuadrature<H, F>,
    mu0: f64,
    albedo_beam: f64,
    albedo_diffuse: f64,
    work: &mut FixedWork,
) -> ColumnFluxes {
    if let Some(f) = super::discrete_ordinates::edge_case(
        layers.iter().all(|l| l.valid),
        layers.is_empty(),
        mu0,
        albedo_beam,
    ) {
        return f;
    }
    factor(layers, quad, albedo_diffuse, work);
    let mu0 = mu0.min(1.0);
    let (dist, k) = layers
        .iter()
        .map(|l| l.resonance_distance(mu0))
        .fold((f64::INFINITY, 0.0), |a, b| if b.0 < a.0 { b } else { a });
    if dist < RESONANCE_WINDOW {
        let tau_total: f64 = layers.iter().map(|l| l.tau).sum();
        let direct = (-tau_total / mu0).exp();
        let (m1, m2) = ((1.0 - RESONANCE_WINDOW) / k, (1.0 + RESONANCE_WINDOW) / k);
        let f1 = solve_at(layers, quad, m1, albedo_beam, albedo_diffuse, work);
        let f2 = solve_at(layers, quad, m2, albedo_beam, albedo_diffuse, work);
        let t = (mu0 - m1) / (m2 - m1);
        let lerp = |a: f64, b: f64| a + t * (b - a);
        let mut out = ColumnFluxes {
            toa_up: lerp(f1.toa_up, f2.toa_up),
            sfc_down_direct: direct,
            sfc_down_diffuse: lerp(
                f1.sfc_down_direct + f1.sfc_down_diffuse,
                f2.sfc_down_direct + f2.sfc_down_diffuse,
            ) - direct,
            sfc_up: lerp(f1.sfc_up, f2.sfc_up),
            layer_absorption: [0.0; MAX_LAYERS],
        };
        for i in 0..MAX_LAYERS {
            out.layer_absorption[i] = lerp(f1.layer_absorption[i], f2.layer_absorption[i]);
        }
        return out;
    }
    solve_at(layers, quad, mu0, albedo_beam, albedo_diffuse, work)
}

/// LU factorization with partial pivoting of the `size` × `size` row-major matrix `a` whose
/// lower and upper bandwidths are both `band`, in place, with the row interchanges into
/// `pivots`; false if a pivot is 0 or not finite (Golub & Van Loan [2] of the module
/// documentation, § 4.3.5, from memory: with partial pivoting the upper factor's bandwidth
/// grows to 2 × `band`, the lower one's stays `band`).
fn factor_banded(a: &mut [f64], pivots: &mut Vec<usize>, size: usize, band: usize) -> bool {
    pivots.clear();
    for k in 0..size {
        let rows = (k + band + 1).min(size);
        let cols = (k + 2 * band + 1).min(size);
        let mut p = k;
        for r in k + 1..rows {
            if a[r * size + k].abs() > a[p * size + k].abs() {
                p = r;
            }
        }
        pivots.push(p);
        let pivot = a[p * size + k];
        if pivot == 0.0 || !pivot.is_finite() {
            return false;
        }
        if p != k {
            for c in k..cols {
                a.swap(k * size + c, p * size + c);
            }
        }
        for r in k + 1..rows {
            let f = a[r * size + k] / pivot;
            a[r * size + k] = f;
            if f == 0.0 {
                continue;
            }
            for c in k + 1..cols {
                a[r * size + c] -= f * a[k * size + c];
            }
        }
    }
    true
}

/// Solution of the system factored by [`factor_banded`], right-hand side `b` overwritten.
fn solve_factored(a: &[f64], pivots: &[usize], b: &mut [f64], size: usize, band: usize) {
    for k in 0..size {
        b.swap(k, pivots[k]);
        let rows = (k + band + 1).min(size);
        for r in k + 1..rows {
            b[r] -= a[r * size + k] * b[k];
        }
    }
    for k in (0..size).rev() {
        let cols = (k + 2 * band + 1).min(size);
        let mut s = b[k];
        for c in k + 1..cols {
            s -= a[k * size + c] * b[c];
        }
        b[k] = s / a[k * size + k];
    }
}

/// Builds and factors the boundary-value matrix of `layers` into `work`, unless it holds
/// the factorization for the same layers and diffuse albedo already.
fn factor<const H: usize, const F: usize>(
    layers: &[&FixedModes<H, F>],
    quad: &FixedQuadrature<H, F>,
    albedo_diffuse: f64,
    work: &mut FixedWork,
) {
    let nl = layers.len();
    let key_len = 1 + nl * (F + 2);
    let same = work.key.len() == key_len
        && work.key[0] == albedo_diffuse
        && layers.iter().enumerate().all(|(p, l)| {
            let k = &work.key[1 + p * (F + 2)..1 + (p + 1) * (F + 2)];
            k[0] == l.tau_scaled && k[1] == l.ssa_scaled && k[2..] == l.moments[..]
        });
    if same {
        return;
    }
    work.key.clear();
    work.key.push(albedo_diffuse);
    for l in layers {
        work.key.push(l.tau_scaled);
        work.key.push(l.ssa_scaled);
        work.key.extend_from_slice(&l.moments);
    }
    let size = F * nl;
    let a = &mut work.lu;
    a.clear();
    a.resize(size * size, 0.0);
    // Top: no diffuse light enters (downward rows of the first layer's top values).
    for i in 0..H {
        a[i * size..i * size + F].copy_from_slice(&layers[0].at_top[H + i]);
    }
    // Continuity at the interfaces.
    for p in 0..nl.saturating_sub(1) {
        let row0 = H + F * p;
        let (c0, c1) = (F * p, F * (p + 1));
        for r in 0..F {
            let row = (row0 + r) * size;
            a[row + c0..row + c0 + F].copy_from_slice(&layers[p].at_bottom[r]);
            for c in 0..F {
                a[row + c1 + c] = -layers[p + 1].at_top[r][c];
            }
        }
    }
    // Surface: I⁺_i − 2A_d Σ_j w_j μ_j I⁻_j.
    let last = layers[nl - 1];
    let row0 = size - H;
    let c0 = F * (nl - 1);
    let mut reflected = [0.0; F];
    for (c, v) in reflected.iter_mut().enumerate() {
        for j in 0..H {
            *v += 2.0 * albedo_diffuse * quad.wmu[j] * last.at_bottom[H + j][c];
        }
    }
    for i in 0..H {
        let row = (row0 + i) * size;
        for c in 0..F {
            a[row + c0 + c] = last.at_bottom[i][c] - reflected[c];
        }
    }
    work.regular = factor_banded(a, &mut work.pivots, size, 3 * H - 1);
}

/// [`solve_fixed`] away from the resonance, with the matrix factored by [`factor`].
fn solve_at<const H: usize, const F: usize>(
    layers: &[&FixedModes<H, F>],
    quad: &FixedQuadrature<H, F>,
    mu0: f64,
    albedo_beam: f64,
    albedo_diffuse: f64,
    work: &mut FixedWork,
) -> ColumnFluxes {
    let nl = layers.len();
    let size = F * nl;
    let mut pm0 = [0.0; F];
    for (l, p) in pm0.iter_mut().enumerate() {
        *p = legendre_p(l, -mu0);
    }
    // Beam at each level (scaled optical depths) and the particular solutions at the tops
    // of the layers (at the bottoms: × the layer's beam transmission).
    let FixedWork {
        lu,
        pivots,
        regular,
        rhs: b,
        beam,
        transmission,
        z_top,
        ..
    } = work;
    beam.clear();
    beam.push(1.0);
    transmission.clear();
    z_top.clear();
    for (p, l) in layers.iter().enumerate() {
        let z = l.particular(quad, &pm0, mu0);
        z_top.extend(z.iter().map(|v| v * beam[p]));
        let t = (-l.tau_scaled / mu0).exp();
        transmission.push(t);
        beam.push(beam[p] * t);
    }
    let zt = |p: usize, r: usize| z_top[F * p + r];
    let zb = |p: usize, r: usize| z_top[F * p + r] * transmission[p];
    b.clear();
    b.resize(size, 0.0);
    for i in 0..H {
        b[i] = -zt(0, H + i);
    }
    for p in 0..nl.saturating_sub(1) {
        let row0 = H + F * p;
        for r in 0..F {
            b[row0 + r] = zt(p + 1, r) - zb(p, r);
        }
    }
    let wmu = &quad.wmu;
    let mut reflected_z = 0.0;
    for j in 0..H {
        reflected_z += 2.0 * albedo_diffuse * wmu[j] * zb(nl - 1, H + j);
    }
    let row0 = size - H;
    for i in 0..H {
        b[row0 + i] = albedo_beam / PI * beam[nl] - zb(nl - 1, i) + reflected_z;
    }
    if *regular {
        solve_factored(lu, pivots, b, size, 3 * H - 1);
    } else {
        b.iter_mut().for_each(|v| *v = 0.0);
    }
    let coef = &b[..];
    // Fluxes at each level: 2π Σ w μ I±.
    let flux = |values: &[[f64; F]; F], z: &dyn Fn(usize) -> f64, p: usize| -> (f64, f64) {
        let c = &coef[F * p..F * (p + 1)];
        let (mut up, mut dn) = (0.0, 0.0);
        for j in 0..H {
            let (mut iu, mut id) = (z(j), z(H + j));
            for m in 0..F {
                iu += values[j][m] * c[m];
                id += values[H + j][m] * c[m];
            }
            up += wmu[j] * iu;
            dn += wmu[j] * id;
        }
        (2.0 * PI * up, 2.0 * PI * dn)
    };
    let (toa_up, _) = flux(&layers[0].at_top, &|r| zt(0, r), 0);
    let mut layer_absorption = [0.0; MAX_LAYERS];
    let mut net_above = 1.0 - toa_up;
    let mut sfc = (0.0, 0.0);
    for p in 0..nl {
        let (up, dn) = flux(&layers[p].at_bottom, &|r| zb(p, r), p);
        let net_below = beam[p + 1] + dn - up;
        if p < MAX_LAYERS {
            layer_absorption[p] = net_above - net_below;
        }
        net_above = net_below;
        sfc = (up, dn);
    }
    let tau_total: f64 = layers.iter().map(|l| l.tau).sum();
    let direct = (-tau_total / mu0).exp();
    let total_down = beam[nl] + sfc.1;
    ColumnFluxes {
        toa_up,
        sfc_down_direct: direct,
        sfc_down_diffuse: total_down - direct,
        sfc_up: sfc.0,
        layer_absorption,
    }
}

/// [`super::discrete_ordinates::solve_column`] on this path for F = 2H streams.
pub fn solve_column_fixed<const H: usize, const F: usize>(
    layers: &[ScatteringLayer],
    mu0: f64,
    albedo: f64,
    delta_m: bool,
) -> ColumnFluxes {
    let quad = FixedQuadrature::<H, F>::new();
    let modes: Vec<FixedModes<H, F>> = layers
        .iter()
        .map(|l| FixedModes::new(l, &quad, delta_m))
        .collect();
    let refs: Vec<&FixedModes<H, F>> = modes.iter().collect();
    solve_fixed(&refs, &quad, mu0, albedo, albedo, &mut FixedWork::default())
}

#[cfg(test)]
mod tests {
    use super::*;

    /// The Jacobi eigen-solution reproduces the matrix: A v = λ v, vᵀv = 1.
    #[test]
    fn jacobi_eigenpairs() {
        let a = [[4.0, 1.0, 0.5], [1.0, 3.0, 0.2], [0.5, 0.2, 1.0]];
        let (values, v) = symmetric_eigen(a);
        for j in 0..3 {
            let mut norm = 0.0;
            for i in 0..3 {
                let av: f64 = (0..3).map(|m| a[i][m] * v[m][j]).sum();
                assert!((av - values[j] * v[i][j]).abs() < 1e-13);
                norm += v[i][j] * v[i][j];
            }
            assert!((norm - 1.0).abs() < 1e-14);
        }
    }

    /// The banded solve agrees with the dense one on a banded matrix.
    #[test]
    fn banded_equals_dense() {
        let size = 6;
        let band = 2;
        let mut a = vec![0.0; size * size];
        let mut dense = [[0.0; 6]; 6];
        for i in 0..size {
            for j in 0..size {
                if i.abs_diff(j) <= band {
                    let v =
                        1.0 / (1.0 + i as f64 + 2.0 * j as f64) + if i == j { 0.1 } else { 0.0 };
                    a[i * size + j] = v;
                    dense[i][j] = v;
                }
            }
        }
        let rhs = [1.0, -2.0, 0.5, 3.0, 0.0, 1.5];
        let mut b = rhs.to_vec();
        let mut pivots = Vec::new();
        assert!(factor_banded(&mut a, &mut pivots, size, band));
        solve_factored(&a, &pivots, &mut b, size, band);
        let x = solve_dense(dense, rhs).expect("regular");
        for i in 0..size {
            assert!((b[i] - x[i]).abs() < 1e-10 * x[i].abs().max(1.0));
        }
    }
}
