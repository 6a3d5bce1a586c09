//! Fugacity coefficients and their derivatives at (T, p, n), derived from any
//! [`FluidModel`]'s residual Helmholtz energy (Michelsen & Mollerup 2007, ch. 2):
//!
//! p = nRT/V − RT F_V,  ln φ_i = F_{n_i} − ln Z,
//! (∂ln φ_i/∂n_j)_{T,p} = F_{n_i n_j} + 1/n + (∂p/∂n_i)(∂p/∂n_j)/(RT ∂p/∂V),
//! (∂ln φ_i/∂T)_{p,n} = F_{n_i T} + 1/T − v̄_i (∂p/∂T)_V/(RT),
//! (∂ln φ_i/∂p)_{T,n} = v̄_i/(RT) − 1/p,  v̄_i = −(∂p/∂n_i)/(∂p/∂V).

use super::{FluidModel, HelmholtzDerivs};
use crate::error::{Error, Result, check, num};
use crate::substance::R;

/// Which derivatives to compute beyond the values.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub struct Need {
    /// Composition derivatives (∂ln φ_i/∂n_j at fixed T, p; ∂²F/∂n_i∂n_j).
    pub composition: bool,
    /// Temperature derivatives (∂ln φ_i/∂T, and the F_T family needed for energies).
    pub temperature: bool,
    /// Pressure derivatives ∂ln φ_i/∂p.
    pub pressure: bool,
}

impl Need {
    /// Values only (ln φ, Z, V).
    pub const VALUES: Need = Need {
        composition: false,
        temperature: false,
        pressure: false,
    };
    /// Values and composition derivatives.
    pub const COMPOSITION: Need = Need {
        composition: true,
        temperature: false,
        pressure: false,
    };
    /// Everything.
    pub const ALL: Need = Need {
        composition: true,
        temperature: true,
        pressure: true,
    };
}

/// Which volume root to evaluate a phase on.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, Default, serde::Serialize, serde::Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum RootChoice {
    /// The root of least Gibbs energy (the stable one when there are two).
    #[default]
    Stable,
    /// The smallest volume root (liquid-like); the only root if there is one.
    Liquid,
    /// The largest volume root (vapour-like); the only root if there is one.
    Vapor,
}

/// Output of [`ln_phi`]: a phase evaluated at (T, p, n). Vectors are reused between calls.
#[derive(Debug, Clone, Default)]
pub struct LnPhi {
    /// Total volume, m3.
    pub v: f64,
    /// Compressibility factor Z = pV/(nRT).
    pub z: f64,
    /// ln φ_i.
    pub ln_phi: Vec<f64>,
    /// (∂ln φ_i/∂n_j)_{T,p}, 1/mol, row-major (with [`Need::composition`]).
    pub dn: Vec<f64>,
    /// (∂ln φ_i/∂T)_{p,n}, 1/K (with [`Need::temperature`]).
    pub dt: Vec<f64>,
    /// (∂ln φ_i/∂p)_{T,n}, 1/Pa (with [`Need::pressure`]).
    pub dp: Vec<f64>,
    /// Partial molar volumes v̄_i, m3/mol.
    pub vbar: Vec<f64>,
    /// G^r/(RT) = Σ n_i ln φ_i (mol).
    pub g_res: f64,
    /// Whether the root taken had a competitor (two roots existed).
    pub two_roots: bool,
    /// Which of two roots was taken (`Liquid` = smaller volume, `Vapor` = larger), or
    /// `Stable` when there was only one.
    pub root: RootChoice,
    /// Whether the phase is liquid-like by the model's rule.
    pub liquid_like: bool,
}

impl LnPhi {
    /// Storage for `nc` components.
    pub fn new(nc: usize) -> Self {
        let mut s = LnPhi::default();
        s.resize(nc);
        s
    }

    /// Copies `other` into `self` without allocating when the sizes match.
    pub fn copy_from(&mut self, other: &LnPhi) {
        self.v = other.v;
        self.z = other.z;
        copy_vec(&mut self.ln_phi, &other.ln_phi);
        copy_vec(&mut self.dn, &other.dn);
        copy_vec(&mut self.dt, &other.dt);
        copy_vec(&mut self.dp, &other.dp);
        copy_vec(&mut self.vbar, &other.vbar);
        self.g_res = other.g_res;
        self.two_roots = other.two_roots;
        self.root = other.root;
        self.liquid_like = other.liquid_like;
    }

    fn resize(&mut self, nc: usize) {
        if self.ln_phi.len() != nc {
            self.ln_phi.resize(nc, 0.0);
            self.dn.resize(nc * nc, 0.0);
            self.dt.resize(nc, 0.0);
            self.dp.resize(nc, 0.0);
            self.vbar.resize(nc, 0.0);
        }
    }
}

/// Reusable scratch for [`ln_phi`].
#[derive(Debug, Clone, Default)]
pub struct FugacityWork {
    /// Helmholtz derivatives storage.
    pub derivs: HelmholtzDerivs,
    /// A second store, for comparing two volume roots without re-evaluation.
    pub spare: HelmholtzDerivs,
    /// Excess-property storage, for models whose liquid comes from an excess Gibbs energy.
    pub excess: super::ExcessDerivs,
}

impl FugacityWork {
    /// Scratch for `nc` components.
    pub fn new(nc: usize) -> Self {
        FugacityWork {
            derivs: HelmholtzDerivs::new(nc),
            spare: HelmholtzDerivs::new(nc),
            excess: super::ExcessDerivs::new(nc),
        }
    }
}

/// Evaluates ln φ (and the requested derivatives) of a phase at (T (K), p (Pa), n (mol)) on
/// the chosen root. Allocation-free once `work` and `out` have been sized.
pub fn ln_phi<M: FluidModel + ?Sized>(
    model: &M,
    t: f64,
    p: f64,
    n: &[f64],
    root: RootChoice,
    need: Need,
    work: &mut FugacityWork,
    out: &mut LnPhi,
) -> Result<()> {
    check::temperature(t)?;
    check::pressure(p)?;
    let nc = model.num_components();
    let ntot = check::amounts(n, nc)?;
    out.resize(nc);
    let roots = model.volume_roots(t, p, n, &mut work.derivs)?;
    out.two_roots = roots.count == 2;
    let mneed = Need {
        pressure: false,
        ..need
    };
    out.root = match (root, roots.count) {
        (_, 1) => RootChoice::Stable,
        (RootChoice::Stable, _) => RootChoice::Stable, // decided below
        (r, _) => r,
    };
    let v = match (root, roots.count) {
        (_, 1) => roots.v[0],
        (RootChoice::Liquid, _) => roots.v[0],
        (RootChoice::Vapor, _) => roots.v[1],
        (RootChoice::Stable, _) => {
            // Least G^r/RT = F + (Z − 1) n − n ln Z over the two roots; both are evaluated
            // with the requested derivatives, and the loser's store is discarded.
            let g = |d: &HelmholtzDerivs, v: f64| {
                let z = p * v / (ntot * R * t);
                d.f + (z - 1.0) * ntot - ntot * z.ln()
            };
            model.residual(t, roots.v[0], n, mneed, &mut work.derivs)?;
            model.residual(t, roots.v[1], n, mneed, &mut work.spare)?;
            let v = if g(&work.spare, roots.v[1]) < g(&work.derivs, roots.v[0]) {
                std::mem::swap(&mut work.derivs, &mut work.spare);
                out.root = RootChoice::Vapor;
                roots.v[1]
            } else {
                out.root = RootChoice::Liquid;
                roots.v[0]
            };
            return finish(model, t, p, v, n, ntot, need, &work.derivs, out);
        }
    };
    evaluate_at_volume(model, t, p, v, n, ntot, need, work, out)
}

/// Evaluates the phase at a known volume `v` (m3) that solves p(T, v, n) = p.
pub(crate) fn evaluate_at_volume<M: FluidModel + ?Sized>(
    model: &M,
    t: f64,
    p: f64,
    v: f64,
    n: &[f64],
    ntot: f64,
    need: Need,
    work: &mut FugacityWork,
    out: &mut LnPhi,
) -> Result<()> {
    let mneed = Need {
        pressure: false,
        ..need
    };
    model.residual(t, v, n, mneed, &mut work.derivs)?;
    finish(model, t, p, v, n, ntot, need, &work.derivs, out)
}

/// ln φ and its derivatives from the Helmholtz derivatives `d` at volume `v`.
fn finish<M: FluidModel + ?Sized>(
    model: &M,
    t: f64,
    p: f64,
    v: f64,
    n: &[f64],
    ntot: f64,
    need: Need,
    d: &HelmholtzDerivs,
    out: &mut LnPhi,
) -> Result<()> {
    let nc = n.len();
    let rt = R * t;
    let z = p * v / (ntot * rt);
    if !(z > 0.0) || !z.is_finite() {
        return Err(Error::invalid(
            "state",
            format!(
                "compressibility factor {z} at T = {t} K, p = {p} Pa",
                z = num(z),
                t = num(t),
                p = num(p)
            ),
        ));
    }
    let lnz = z.ln();
    let p_v = -rt * d.f_vv - ntot * rt / (v * v);
    let mut g = 0.0;
    for i in 0..nc {
        out.ln_phi[i] = d.f_n[i] - lnz;
        g += n[i] * out.ln_phi[i];
        let p_i = rt / v - rt * d.f_nv[i];
        out.vbar[i] = -p_i / p_v;
    }
    if need.composition {
        // With v̄_i = −p_i/p_V: p_i p_j/(RT p_V) = v̄_i v̄_j p_V/RT.
        let c = p_v / rt;
        for i in 0..nc {
            let ci = out.vbar[i] * c;
            for j in 0..nc {
                out.dn[i * nc + j] = d.f_nn[i * nc + j] + 1.0 / ntot + ci * out.vbar[j];
            }
        }
    }
    if need.temperature {
        let p_t = p / t - rt * d.f_tv;
        for i in 0..nc {
            out.dt[i] = d.f_nt[i] + 1.0 / t - out.vbar[i] * p_t / rt;
        }
    }
    if need.pressure {
        for i in 0..nc {
            out.dp[i] = out.vbar[i] / rt - 1.0 / p;
        }
    }
    out.v = v;
    out.z = z;
    out.g_res = g;
    out.liquid_like = model.is_liquid_like(t, v, n);
    if !g.is_finite() {
        return Err(Error::invalid(
            "state",
            format!(
                "non-finite fugacity coefficients at T = {t} K, p = {p} Pa",
                t = num(t),
                p = num(p)
            ),
        ));
    }
    Ok(())
}

fn copy_vec(dst: &mut Vec<f64>, src: &[f64]) {
    if dst.len() == src.len() {
        dst.copy_from_slice(src);
    } else {
        dst.clear();
        dst.extend_from_slice(src);
    }
}
