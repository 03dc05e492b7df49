//! Discrete-ordinate fluxes of a stack of homogeneous layers over a Lambertian surface.
//!
//! The azimuthally averaged (m = 0) radiative-transfer equation for a collimated beam of
//! cosine zenith μ0 and flux F0 normal to the beam,
//!
//! ```text
//! μ dI/dτ = I − (ω/2) Σ_l (2l+1) χ_l P_l(μ) ∫ P_l(μ′) I(μ′) dμ′ − X(μ) e^(−τ/μ0),
//! X(μ)    = ω F0/(4π) Σ_l (2l+1) χ_l P_l(μ) P_l(−μ0),
//! ```
//!
//! is solved with N streams (N even, the double-Gauss quadrature of n = N/2 Gauss–Legendre
//! points on each hemisphere) by the method of Stamnes, Tsay, Wiscombe & Jayaweera [1]
//! (the DISORT algorithm; Chandrasekhar [2], ch. VI; Thomas & Stamnes [3], ch. 8–9):
//!
//! - **Delta-M** (Wiscombe [4]): the forward fraction f = χ_N is removed from the phase
//!   function, χ′_l = (χ_l − f)/(1 − f), τ′ = (1 − ωf) τ, ω′ = ω(1 − f)/(1 − ωf).
//! - **Homogeneous solutions** I± = G± e^(∓kτ): with α = M⁻¹(D⁺W − 1) and β = M⁻¹D⁻W
//!   (M = diag μ_i, W = diag w_i, D^± the phase matrix between μ_i and ±μ_j), the 2n-size
//!   eigenproblem reduces to the n-size problem (α − β)(α + β) S = k² S, S = G⁺ + G⁻,
//!   G⁺ − G⁻ = (α + β) S / k ([1], eqs. 8–9; Stamnes & Swanson [5]). The matrix is made
//!   symmetric: with X = C^½(B − W⁻¹)C^½, Y = C^½(A − W⁻¹)C^½ (A = D⁺ + D⁻,
//!   B = D⁺ − D⁻, C = W M⁻¹, all symmetric) the problem is X Y y = k² y, and with the
//!   Cholesky factor −X = L Lᵀ the eigenvalues are those of the symmetric L ᵀ(−Y)L, which is
//!   positive semi-definite (a symmetric eigenproblem; nalgebra's `SymmetricEigen`).
//! - **Conservative scattering** (ω′ = 1): one eigenvalue is 0 and its pair of solutions is
//!   replaced by the constant I = 1 and the linear I± = (τ − τ_top) ± D/2 with
//!   (α − β) D = −2·1 (the diffusion solution; Thomas & Stamnes [3], § 9.2, from memory),
//!   so ω = 1 is solved exactly, not by a nearby ω < 1.
//! - **Particular solution** Z e^(−τ/μ0) from the 2n linear equations
//!   (α − 1/μ0) Z⁺ + β Z⁻ = −M⁻¹X⁺, β Z⁺ + (α + 1/μ0) Z⁻ = −M⁻¹X⁻ ([1], eq. 12). They are
//!   singular where k μ0 = 1; within a relative distance 10⁻⁵ of that the fluxes are the
//!   linear interpolation between μ0 = (1 ∓ 10⁻⁵)/k (the beam itself is exact), as in
//!   [`super::two_stream`].
//! - **Scaled solutions** (Stamnes & Conklin [6]): in each layer the growing solution is
//!   written e^(−k(τ_bottom − τ)), so every exponential is ≤ 1 and nothing overflows for any
//!   optical depth.
//! - **Boundary and continuity conditions** ([1], eqs. 15–17): no diffuse light enters at the
//!   top, the intensity is continuous at each interface, and the Lambertian surface reflects
//!   I⁺ = (A/π)(μ0 F0 e^(−τ/μ0) + 2π Σ w_j μ_j I⁻_j); the 2nL equations of L layers are
//!   solved by LU decomposition (nalgebra).
//!
//! Phase-function moments: Henyey–Greenstein χ_l = g^l for aerosol [3] and the Rayleigh phase
//! function (3/4)(1 + cos²Θ) = 1 + ½P₂, i.e. χ₀ = 1, χ₂ = 0.1 and all others 0, mixed within
//! a layer by scattering optical depth (common practice).
//!
//! Fluxes are fractions of the incident horizontal flux μ0 F0 = 1, with the same meaning as
//! [`super::column::ColumnFluxes`]: the surface direct flux is the unscattered beam
//! e^(−τ/μ0) with the unscaled τ, and the diffuse flux is the rest of the downward flux.
//!
//! Checked against DISORT (PyPI `disortpp`) at the same N and delta-M setting in
//! `tests/physics_discrete_ordinates.rs`.
//!
//! 1. Stamnes, K., Tsay, S.-C., Wiscombe, W. & Jayaweera, K. (1988), Appl. Opt. 27, 2502–2509.
//! 2. Chandrasekhar, S. (1960), Radiative Transfer, Dover.
//! 3. Thomas, G. E. & Stamnes, K. (1999), Radiative Transfer in the Atmosphere and Ocean,
//!    Cambridge University Press.
//! 4. Wiscombe, W. J. (1977), J. Atmos. Sci. 34, 1408–1422.
//! 5. Stamnes, K. & Swanson, R. A. (1981), J. Atmos. Sci. 38, 387–399.
//! 6. Stamnes, K. & Conklin, P. (1984), J. Quant. Spectrosc. Radiat. Transfer 31, 273–282.

use super::column::{ColumnFluxes, MAX_LAYERS};
use nalgebra::{DMatrix, DVector};
use std::f64::consts::PI;

/// Largest number of streams accepted.
pub const MAX_STREAMS: usize = 64;
/// Relative half-width of the interpolation window around the resonance k μ0 = 1.
pub(super) const RESONANCE_WINDOW: f64 = 1e-5;
/// Layers with 1 − ω′ below this are solved as conservative (the absorption neglected is
/// below 10⁻⁹ of the layer's extinction) [unitless].
pub(super) const CONSERVATIVE_LIMIT: f64 = 1e-9;
/// Largest |g| accepted (as in [`super::two_stream`]) [unitless].
const G_LIMIT: f64 = 0.999_999;

/// One homogeneous layer: a mixture of molecules (Rayleigh phase function) and aerosol
/// (Henyey–Greenstein phase function).
#[derive(Debug, Clone, Copy, PartialEq, Default)]
pub struct ScatteringLayer {
    /// Extinction optical depth [unitless, ≥ 0].
    pub tau: f64,
    /// Single-scattering albedo [unitless, 0–1].
    pub ssa: f64,
    /// Share of the layer's scattering optical depth due to molecules [unitless, 0–1].
    pub rayleigh_share: f64,
    /// Asymmetry factor of the aerosol's Henyey–Greenstein phase function [unitless, −1–1].
    pub aerosol_g: f64,
}

impl ScatteringLayer {
    /// Legendre moment χ_l of the layer's phase function (normalised so that χ₀ = 1):
    /// r χ_l^Rayleigh + (1 − r) g^l, with χ^Rayleigh = (1, 0, 0.1, 0, …) and r the Rayleigh
    /// share of the scattering (Thomas & Stamnes [3] of the module documentation, § 3.4 for
    /// both phase functions, from memory).
    pub fn phase_moment(&self, l: usize) -> f64 {
        let r = self.rayleigh_share.clamp(0.0, 1.0);
        let rayleigh = match l {
            0 => 1.0,
            2 => 0.1,
            _ => 0.0,
        };
        let g = self.aerosol_g.clamp(-G_LIMIT, G_LIMIT);
        r * rayleigh + (1.0 - r) * g.powi(l as i32)
    }
}

/// The double-Gauss quadrature of N streams and the Legendre polynomials at its angles.
#[derive(Debug, Clone)]
pub struct Quadrature {
    /// Number of streams N (even).
    streams: usize,
    /// Cosines μ_i of the upward (and, negated, downward) streams, ascending [unitless].
    mu: Vec<f64>,
    /// Weights w_i on [0, 1] (sum 1) [unitless].
    weight: Vec<f64>,
    /// P_l(μ_i), row l = 0..N−1, column i.
    legendre: Vec<Vec<f64>>,
}

impl Quadrature {
    /// Double-Gauss quadrature for `streams` streams (Sykes 1951, as used by DISORT [1]):
    /// n = N/2 Gauss–Legendre points on [0, 1] for each hemisphere.
    ///
    /// - `streams`: N, even, 2–[`MAX_STREAMS`]
    ///
    /// Returns `None` for an odd or out-of-range N.
    pub fn new(streams: usize) -> Option<Self> {
        if !(2..=MAX_STREAMS).contains(&streams) || !streams.is_multiple_of(2) {
            return None;
        }
        let n = streams / 2;
        let (x, w) = super::diurnal::gauss_legendre(n);
        let mu: Vec<f64> = x.iter().map(|x| 0.5 * (1.0 + x)).collect();
        let weight: Vec<f64> = w.iter().map(|w| 0.5 * w).collect();
        let legendre = (0..streams)
            .map(|l| mu.iter().map(|&m| legendre_p(l, m)).collect())
            .collect();
        Some(Self {
            streams,
            mu,
            weight,
            legendre,
        })
    }

    /// Number of streams N.
    pub fn streams(&self) -> usize {
        self.streams
    }

    /// Cosines of the upward streams [unitless].
    pub fn cosines(&self) -> &[f64] {
        &self.mu
    }
}

/// Legendre polynomial P_l(x) by the three-term recurrence (Abramowitz & Stegun 1964, 8.5.3).
pub(super) fn legendre_p(l: usize, x: f64) -> f64 {
    let (mut p0, mut p1) = (1.0, x);
    if l == 0 {
        return 1.0;
    }
    for k in 1..l {
        let kf = k as f64;
        let p2 = ((2.0 * kf + 1.0) * x * p1 - kf * p0) / (kf + 1.0);
        p0 = p1;
        p1 = p2;
    }
    p1
}

/// The solutions of one layer that do not depend on the sun: its delta-M scaled optics,
/// eigenvalues and the values of its 2n homogeneous solutions at its top and bottom.
#[derive(Debug, Clone)]
pub struct LayerModes {
    n: usize,
    /// False if the optics had a NaN (the fluxes are then NaN).
    valid: bool,
    /// Unscaled optical depth [unitless].
    tau: f64,
    /// Delta-M scaled optical depth τ′ [unitless].
    tau_scaled: f64,
    /// Scaled single-scattering albedo ω′ [unitless].
    ssa_scaled: f64,
    /// Scaled moments χ′_l, l = 0..N−1.
    moments: Vec<f64>,
    /// Eigenvalues k_j [unitless]; 0 for the conservative pair.
    k: Vec<f64>,
    /// α and β (n × n).
    alpha: DMatrix<f64>,
    beta: DMatrix<f64>,
    /// Values of the 2n basis solutions (columns; first n decay downward, last n upward) at
    /// the layer's top and bottom; rows: the n upward then the n downward intensities.
    at_top: DMatrix<f64>,
    at_bottom: DMatrix<f64>,
}

impl LayerModes {
    /// Delta-M scaling and homogeneous solutions of `layer` (see the module documentation).
    ///
    /// - `layer`: optical properties; NaN-free values are clamped into their ranges
    /// - `quad`: the quadrature
    /// - `delta_m`: apply the delta-M scaling of Wiscombe [4]
    pub fn new(layer: &ScatteringLayer, quad: &Quadrature, delta_m: bool) -> Self {
        let nstr = quad.streams;
        let n = nstr / 2;
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
        let f = if delta_m {
            layer.phase_moment(nstr)
        } else {
            0.0
        };
        let moments: Vec<f64> = (0..nstr)
            .map(|l| (layer.phase_moment(l) - f) / (1.0 - f))
            .collect();
        let tau_scaled = (1.0 - ssa * f) * tau;
        ssa = ssa * (1.0 - f) / (1.0 - ssa * f);
        let conservative = 1.0 - ssa < CONSERVATIVE_LIMIT;
        if conservative {
            ssa = 1.0;
        }
        // Phase matrices D±_ij = (ω/2) Σ (2l+1) χ_l P_l(μ_i) P_l(±μ_j) ([1], eq. 7).
        let p = &quad.legendre;
        let mut dp = DMatrix::<f64>::zeros(n, n);
        let mut dm = DMatrix::<f64>::zeros(n, n);
        for i in 0..n {
            for j in 0..n {
                let (mut sp, mut sm) = (0.0, 0.0);
                for (l, &chi) in moments.iter().enumerate() {
                    let term = (2 * l + 1) as f64 * chi * p[l][i] * p[l][j];
                    sp += term;
                    sm += if l % 2 == 0 { term } else { -term };
                }
                dp[(i, j)] = 0.5 * ssa * sp;
                dm[(i, j)] = 0.5 * ssa * sm;
            }
        }
        let (mu, w) = (&quad.mu, &quad.weight);
        let alpha = DMatrix::from_fn(n, n, |i, j| {
            (dp[(i, j)] * w[j] - if i == j { 1.0 } else { 0.0 }) / mu[i]
        });
        let beta = DMatrix::from_fn(n, n, |i, j| dm[(i, j)] * w[j] / mu[i]);
        // Symmetric form: X = C^½(B − W⁻¹)C^½, Y = C^½(A − W⁻¹)C^½, C = W M⁻¹.
        let c_half: Vec<f64> = (0..n).map(|i| (w[i] / mu[i]).sqrt()).collect();
        let sym = |s: f64| {
            DMatrix::from_fn(n, n, |i, j| {
                let a = dp[(i, j)] + s * dm[(i, j)] - if i == j { 1.0 / w[i] } else { 0.0 };
                c_half[i] * a * c_half[j]
            })
        };
        let neg_x = -sym(-1.0);
        let neg_y = -sym(1.0);
        // −X is positive definite for |g| < 1; if rounding ever made it fail, fall back on
        // the unfactored product (its eigenvalues are the same).
        let (k2, s_vectors) = match neg_x.clone().cholesky() {
            Some(ch) => {
                let l = ch.l();
                let z = l.transpose() * &neg_y * &l;
                let eig = z.symmetric_eigen();
                // y = L u, S = W⁻¹ C^½ y.
                let y = &l * &eig.eigenvectors;
                let s = DMatrix::from_fn(n, n, |i, j| y[(i, j)] * c_half[i] / w[i]);
                (
                    eig.eigenvalues
                        .iter()
                        .map(|v| v.max(0.0))
                        .collect::<Vec<_>>(),
                    s,
                )
            }
            None => {
                let prod = (&alpha - &beta) * (&alpha + &beta);
                let eig = (0.5 * (&prod + prod.transpose())).symmetric_eigen();
                (
                    eig.eigenvalues.iter().map(|v| v.max(0.0)).collect(),
                    eig.eigenvectors,
                )
            }
        };
        let apb = &alpha + &beta;
        let amb = &alpha - &beta;
        // The conservative pair replaces the smallest eigenvalue.
        let zero_mode = if conservative {
            (0..n).min_by(|&a, &b| k2[a].total_cmp(&k2[b]))
        } else {
            None
        };
        let diffusion = zero_mode.map(|_| {
            // (α − β) D = −2·1.
            let rhs = DVector::from_element(n, -2.0);
            amb.clone()
                .lu()
                .solve(&rhs)
                .unwrap_or_else(|| DVector::zeros(n))
        });
        let mut k = vec![0.0; n];
        let mut at_top = DMatrix::<f64>::zeros(2 * n, 2 * n);
        let mut at_bottom = DMatrix::<f64>::zeros(2 * n, 2 * n);
        for j in 0..n {
            if Some(j) == zero_mode {
                let d = diffusion.as_ref().expect("set with zero_mode");
                for i in 0..n {
                    // Constant solution.
                    at_top[(i, j)] = 1.0;
                    at_top[(n + i, j)] = 1.0;
                    at_bottom[(i, j)] = 1.0;
                    at_bottom[(n + i, j)] = 1.0;
                    // Linear solution (τ − τ_top) ± D/2.
                    at_top[(i, n + j)] = 0.5 * d[i];
                    at_top[(n + i, n + j)] = -0.5 * d[i];
                    at_bottom[(i, n + j)] = tau_scaled + 0.5 * d[i];
                    at_bottom[(n + i, n + j)] = tau_scaled - 0.5 * d[i];
                }
                continue;
            }
            let kj = k2[j].sqrt();
            k[j] = kj;
            let s = s_vectors.column(j);
            let d = (&apb * s) / kj;
            let e = (-kj * tau_scaled).exp();
            for i in 0..n {
                let gp = 0.5 * (s[i] + d[i]);
                let gm = 0.5 * (s[i] - d[i]);
                // Decaying downward: G(k) e^(−k(τ − τ_top)).
                at_top[(i, j)] = gp;
                at_top[(n + i, j)] = gm;
                at_bottom[(i, j)] = gp * e;
                at_bottom[(n + i, j)] = gm * e;
                // Decaying upward: G(−k) e^(−k(τ_bottom − τ)), G(−k) = (G⁻, G⁺).
                at_top[(i, n + j)] = gm * e;
                at_top[(n + i, n + j)] = gp * e;
                at_bottom[(i, n + j)] = gm;
                at_bottom[(n + i, n + j)] = gp;
            }
        }
        Self {
            n,
            valid,
            tau,
            tau_scaled,
            ssa_scaled: ssa,
            moments,
            k,
            alpha,
            beta,
            at_top,
            at_bottom,
        }
    }

    /// Eigenvalues k_j of the homogeneous solutions [unitless]; 0 for the pair replaced by
    /// the conservative solutions.
    pub fn eigenvalues(&self) -> &[f64] {
        &self.k
    }

    /// Delta-M scaled optical depth τ′ [unitless].
    pub fn scaled_optical_depth(&self) -> f64 {
        self.tau_scaled
    }

    /// Smallest relative distance |k μ0 − 1| of the layer's eigenvalues from the resonance.
    fn resonance_distance(&self, mu0: f64) -> (f64, f64) {
        self.k
            .iter()
            .filter(|&&k| k > 0.0)
            .map(|&k| ((k * mu0 - 1.0).abs(), k))
            .fold((f64::INFINITY, 0.0), |a, b| if b.0 < a.0 { b } else { a })
    }

    /// Particular solution Z (2n: upward then downward) at the layer's top for a beam of
    /// flux F0 = 1/μ0 that has reached the top with e^(−τ′_above/μ0) ([1], eq. 12).
    fn particular(&self, quad: &Quadrature, mu0: f64, beam_at_top: f64) -> DVector<f64> {
        let n = self.n;
        let f0 = 1.0 / mu0;
        let p = &quad.legendre;
        let pm0: Vec<f64> = (0..quad.streams).map(|l| legendre_p(l, -mu0)).collect();
        let mut rhs = DVector::<f64>::zeros(2 * n);
        for i in 0..n {
            let (mut xp, mut xm) = (0.0, 0.0);
            for (l, &chi) in self.moments.iter().enumerate() {
                let term = (2 * l + 1) as f64 * chi * p[l][i] * pm0[l];
                xp += term;
                xm += if l % 2 == 0 { term } else { -term };
            }
            let scale = self.ssa_scaled * f0 / (4.0 * PI) * beam_at_top / quad.mu[i];
            rhs[i] = -scale * xp;
            rhs[n + i] = -scale * xm;
        }
        if self.ssa_scaled == 0.0 {
            return rhs * 0.0;
        }
        let mut a = DMatrix::<f64>::zeros(2 * n, 2 * n);
        for i in 0..n {
            for j in 0..n {
                let diag = if i == j { 1.0 / mu0 } else { 0.0 };
                a[(i, j)] = self.alpha[(i, j)] - diag;
                a[(i, n + j)] = self.beta[(i, j)];
                a[(n + i, j)] = self.beta[(i, j)];
                a[(n + i, n + j)] = self.alpha[(i, j)] + diag;
            }
        }
        a.lu().solve(&rhs).unwrap_or_else(|| DVector::zeros(2 * n))
    }
}

/// Fluxes of a stack of layers (top first) over a Lambertian surface, as fractions of the
/// incident horizontal flux (see the module documentation).
///
/// - `layers`: the layers' [`LayerModes`], top first (at most [`MAX_LAYERS`] are reported
///   in `layer_absorption`; all are solved)
/// - `quad`: the quadrature the modes were built with
/// - `mu0`: cosine of the solar zenith angle [unitless, (0, 1]]
/// - `albedo`: Lambertian surface albedo [unitless, 0–1]
///
/// Returns all zeros for μ0 ≤ 0 or NaN, all NaN if a layer's optics are NaN.
pub fn solve_modes(
    layers: &[LayerModes],
    quad: &Quadrature,
    mu0: f64,
    albedo: f64,
) -> ColumnFluxes {
    let refs: Vec<&LayerModes> = layers.iter().collect();
    solve_modes_surface(&refs, quad, mu0, albedo, albedo)
}

/// The column fluxes that need no solve: all NaN when a layer's optics are not usable; zero
/// with the sun down (μ0 ≤ 0 or NaN); the bare surface when there is no layer. `None`
/// otherwise. Shared by the general and the fixed-size paths.
pub(super) fn edge_case(
    layers_valid: bool,
    no_layers: bool,
    mu0: f64,
    albedo_beam: f64,
) -> Option<ColumnFluxes> {
    if !layers_valid {
        return Some(ColumnFluxes {
            toa_up: f64::NAN,
            sfc_down_direct: f64::NAN,
            sfc_down_diffuse: f64::NAN,
            sfc_up: f64::NAN,
            layer_absorption: [f64::NAN; MAX_LAYERS],
        });
    }
    let lit = !(mu0.is_nan() || mu0 <= 0.0);
    (!lit || no_layers).then(|| ColumnFluxes {
        toa_up: if lit { albedo_beam } else { 0.0 },
        sfc_down_direct: if lit { 1.0 } else { 0.0 },
        sfc_up: if lit { albedo_beam } else { 0.0 },
        ..ColumnFluxes::default()
    })
}

/// [`solve_modes`] over a surface that reflects isotropically with one albedo for the beam
/// and another for diffuse light (the surface of [`super::column::add_layers`]):
/// I⁺ = (1/π)(A_beam μ0 F0 e^(−τ′/μ0) + A_diffuse 2π Σ w_j μ_j I⁻_j).
///
/// - `albedo_beam`, `albedo_diffuse`: [unitless, 0–1]
pub fn solve_modes_surface(
    layers: &[&LayerModes],
    quad: &Quadrature,
    mu0: f64,
    albedo_beam: f64,
    albedo_diffuse: f64,
) -> ColumnFluxes {
    if let Some(f) = edge_case(
        layers.iter().all(|l| l.valid),
        layers.is_empty(),
        mu0,
        albedo_beam,
    ) {
        return f;
    }
    let mu0 = mu0.min(1.0);
    // Resonance k μ0 = 1 in any layer: interpolate between the two sides.
    let (dist, k) = layers
        .iter()
        .map(|l| l.resonance_distance(mu0))
        .fold((f64::INFINITY, 0.0), |a, b| if b.0 < a.0 { b } else { a });
    let tau_total: f64 = layers.iter().map(|l| l.tau).sum();
    let direct = (-tau_total / mu0).exp();
    if dist < RESONANCE_WINDOW {
        let (m1, m2) = ((1.0 - RESONANCE_WINDOW) / k, (1.0 + RESONANCE_WINDOW) / k);
        let (f1, f2) = (
            solve_at(layers, quad, m1, albedo_beam, albedo_diffuse),
            solve_at(layers, quad, m2, albedo_beam, albedo_diffuse),
        );
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
    solve_at(layers, quad, mu0, albedo_beam, albedo_diffuse)
}

/// [`solve_modes`] away from the resonance.
fn solve_at(
    layers: &[&LayerModes],
    quad: &Quadrature,
    mu0: f64,
    albedo_beam: f64,
    albedo_diffuse: f64,
) -> ColumnFluxes {
    let n = quad.streams / 2;
    let nl = layers.len();
    let size = 2 * n * nl;
    // Beam at each level (scaled optical depths) and the particular solutions at the tops
    // and bottoms of the layers.
    let mut beam = Vec::with_capacity(nl + 1);
    beam.push(1.0);
    for l in layers {
        let last = *beam.last().expect("non-empty");
        beam.push(last * (-l.tau_scaled / mu0).exp());
    }
    let z_top: Vec<DVector<f64>> = layers
        .iter()
        .enumerate()
        .map(|(p, l)| l.particular(quad, mu0, beam[p]))
        .collect();
    let z_bottom: Vec<DVector<f64>> = layers
        .iter()
        .zip(&z_top)
        .map(|(l, z)| z * (-l.tau_scaled / mu0).exp())
        .collect();
    let mut a = DMatrix::<f64>::zeros(size, size);
    let mut b = DVector::<f64>::zeros(size);
    // Top: no diffuse light enters (downward rows of the first layer's top values).
    for i in 0..n {
        for c in 0..2 * n {
            a[(i, c)] = layers[0].at_top[(n + i, c)];
        }
        b[i] = -z_top[0][n + i];
    }
    // Continuity at the interfaces.
    for p in 0..nl.saturating_sub(1) {
        let row0 = n + 2 * n * p;
        let (c0, c1) = (2 * n * p, 2 * n * (p + 1));
        for r in 0..2 * n {
            for c in 0..2 * n {
                a[(row0 + r, c0 + c)] = layers[p].at_bottom[(r, c)];
                a[(row0 + r, c1 + c)] = -layers[p + 1].at_top[(r, c)];
            }
            b[row0 + r] = z_top[p + 1][r] - z_bottom[p][r];
        }
    }
    // Surface: I⁺_i − 2A_d Σ_j w_j μ_j I⁻_j = (A_b/π) μ0 F0 e^(−τ′/μ0).
    let last = &layers[nl - 1];
    let zb = &z_bottom[nl - 1];
    let row0 = size - n;
    let c0 = 2 * n * (nl - 1);
    let wmu: Vec<f64> = (0..n).map(|j| quad.weight[j] * quad.mu[j]).collect();
    for i in 0..n {
        let mut rhs = albedo_beam / PI * beam[nl] - zb[i];
        for c in 0..2 * n {
            let mut v = last.at_bottom[(i, c)];
            for (j, w) in wmu.iter().enumerate() {
                v -= 2.0 * albedo_diffuse * w * last.at_bottom[(n + j, c)];
            }
            a[(row0 + i, c0 + c)] = v;
        }
        for j in 0..n {
            rhs += 2.0 * albedo_diffuse * wmu[j] * zb[n + j];
        }
        b[row0 + i] = rhs;
    }
    let coef = a.lu().solve(&b).unwrap_or_else(|| DVector::zeros(size));
    // Fluxes at each level: 2π Σ w μ I±.
    let flux = |values: &DMatrix<f64>, z: &DVector<f64>, p: usize| -> (f64, f64) {
        let c = coef.rows(2 * n * p, 2 * n);
        let i = values * c + z;
        let (mut up, mut dn) = (0.0, 0.0);
        for j in 0..n {
            up += wmu[j] * i[j];
            dn += wmu[j] * i[n + j];
        }
        (2.0 * PI * up, 2.0 * PI * dn)
    };
    let (toa_up, _) = flux(&layers[0].at_top, &z_top[0], 0);
    let mut layer_absorption = [0.0; MAX_LAYERS];
    let mut net_above = 1.0 - toa_up;
    let mut sfc = (0.0, 0.0);
    for p in 0..nl {
        let (up, dn) = flux(&layers[p].at_bottom, &z_bottom[p], p);
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

/// Fluxes of a stack of layers (top first) over a Lambertian surface by the discrete-ordinate
/// method with `streams` streams (see the module documentation).
///
/// - `layers`: optical properties, top first
/// - `mu0`: cosine of the solar zenith angle [unitless, (0, 1]]
/// - `albedo`: Lambertian albedo [unitless, 0–1]
/// - `streams`: N, even, 2–[`MAX_STREAMS`]; other values are rounded up to the next even
///   number and clamped
/// - `delta_m`: apply the delta-M scaling
///
/// Up to [`super::discrete_ordinates_fixed::MAX_FIXED_STREAMS`] streams the solution is
/// computed on fixed-size arrays ([`super::discrete_ordinates_fixed`]), above on the general
/// path ([`solve_column_general`]).
pub fn solve_column(
    layers: &[ScatteringLayer],
    mu0: f64,
    albedo: f64,
    streams: usize,
    delta_m: bool,
) -> ColumnFluxes {
    use super::discrete_ordinates_fixed::solve_column_fixed;
    let streams = (streams + streams % 2).clamp(2, MAX_STREAMS);
    let (l, m, a, d) = (layers, mu0, albedo, delta_m);
    match streams {
        2 => solve_column_fixed::<1, 2>(l, m, a, d),
        4 => solve_column_fixed::<2, 4>(l, m, a, d),
        6 => solve_column_fixed::<3, 6>(l, m, a, d),
        8 => solve_column_fixed::<4, 8>(l, m, a, d),
        10 => solve_column_fixed::<5, 10>(l, m, a, d),
        12 => solve_column_fixed::<6, 12>(l, m, a, d),
        14 => solve_column_fixed::<7, 14>(l, m, a, d),
        16 => solve_column_fixed::<8, 16>(l, m, a, d),
        _ => solve_column_general(l, m, a, streams, d),
    }
}

/// [`solve_column`] on the general path (nalgebra, any N), which [`solve_column`] takes
/// above [`super::discrete_ordinates_fixed::MAX_FIXED_STREAMS`] streams (the fixed-size
/// path below); the same solution to rounding.
pub fn solve_column_general(
    layers: &[ScatteringLayer],
    mu0: f64,
    albedo: f64,
    streams: usize,
    delta_m: bool,
) -> ColumnFluxes {
    let streams = (streams + streams % 2).clamp(2, MAX_STREAMS);
    let quad = Quadrature::new(streams).expect("even and in range");
    let modes: Vec<LayerModes> = layers
        .iter()
        .map(|l| LayerModes::new(l, &quad, delta_m))
        .collect();
    solve_modes(&modes, &quad, mu0, albedo)
}

#[cfg(test)]
mod tests {
    use super::*;

    fn hg(tau: f64, ssa: f64, g: f64) -> ScatteringLayer {
        ScatteringLayer {
            tau,
            ssa,
            rayleigh_share: 0.0,
            aerosol_g: g,
        }
    }

    /// P₂(x) = (3x² − 1)/2, P₃(x) = (5x³ − 3x)/2 (Abramowitz & Stegun 1964, Table 22.9).
    #[test]
    fn legendre_recurrence() {
        let x: f64 = 0.3;
        assert!((legendre_p(2, x) - (3.0 * x * x - 1.0) / 2.0).abs() < 1e-15);
        assert!((legendre_p(3, x) - (5.0 * x.powi(3) - 3.0 * x) / 2.0).abs() < 1e-15);
    }

    /// R + T = 1 for a conservative layer over a black surface.
    #[test]
    fn conservative_layer_conserves_energy() {
        for streams in [2, 4, 8, 16] {
            for tau in [1e-4, 0.3, 2.0, 10.0] {
                let f = solve_column(&[hg(tau, 1.0, 0.7)], 0.5, 0.0, streams, true);
                let sum = f.toa_up + f.sfc_down_direct + f.sfc_down_diffuse;
                assert!((sum - 1.0).abs() < 1e-12, "N {streams} τ {tau}: {sum}");
            }
        }
    }

    /// An empty atmosphere reflects the albedo.
    #[test]
    fn no_layers() {
        let f = solve_column(&[], 0.5, 0.3, 4, true);
        assert_eq!((f.toa_up, f.sfc_down_direct), (0.3, 1.0));
    }
}
