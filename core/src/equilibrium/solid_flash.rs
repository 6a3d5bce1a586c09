//! The PT flash with pure solid phases: freeze-out of a species (CO2 from a cold
//! methane-rich gas, ice from humid gas) alongside the fluid phases of the ordinary flash.
//!
//! A pure solid of species j at (T, p) has one chemical potential, μ_j^s(T, p), which the
//! solid model gives in the library reference; through the fluid model's ideal gas of j it is
//! a solid fugacity, ln f_j^s = (g_j^s − g_j^ig(T, 1e5 Pa))/(RT) + ln 1e5
//! ([`SolidModel::ln_fugacity`]). At equilibrium:
//! * an **absent** solid is stable against appearing iff μ_j^s ≥ μ_j in the fluid, i.e.
//!   ln f_j^fluid ≤ ln f_j^s: its margin ln f_j^s − ln f_j^fluid is ≥ 0 (the tangent-plane
//!   distance of the pure solid, per RT);
//! * a **present** solid fixes the fluid's fugacity of j: ln f_j^fluid = ln f_j^s.
//!
//! Method: an active set of present solids around the ordinary flash. For the current set,
//! the amounts r_j of the solid formers left in the fluid solve ln f_j^fluid(r) = ln f_j^s
//! by bracketed false position in each ln r_j (robust where a condensed fluid phase rich in
//! j pins its fugacity), swept in turn over several solids until all hold; each
//! evaluation is a [`FlashContext`] flash of the fluid part (warm-started from the previous
//! one), so the fluid side — its phase split and its stability certificate — is exactly that
//! of the ordinary flash. A solid whose amount would fall to zero leaves the set; the most
//! supersaturated absent solid (margin < −tolerance) joins it; the loop ends when every
//! margin of an absent solid is ≥ −tolerance. Of several solids of one species only the one
//! of least Gibbs energy at (T, p) can be present; the others are reported with their
//! margins.

use super::flash::{FlashContext, FlashOptions, FlashResult};
use crate::error::{Error, Result, check, num};
use crate::model::FluidModel;
use crate::model::solid::SolidModel;
use serde::{Deserialize, Serialize};

/// A candidate pure solid: which fluid component it is, and its model.
#[derive(Clone, Copy)]
pub struct SolidPhaseSpec<'a> {
    /// Index of the species among the fluid model's components.
    pub component: usize,
    /// The solid model (its species must be that component).
    pub model: &'a dyn SolidModel,
}

impl<'a> SolidPhaseSpec<'a> {
    /// The spec for `solid` in `fluid`, the component found by the solid's species name.
    pub fn matching<F: FluidModel + ?Sized>(fluid: &F, solid: &'a dyn SolidModel) -> Result<Self> {
        (0..fluid.num_components())
            .find(|&i| fluid.component_name(i) == solid.species())
            .map(|component| SolidPhaseSpec {
                component,
                model: solid,
            })
            .ok_or_else(|| {
                Error::invalid(
                    "solid",
                    format!("the fluid model has no component named '{}'", solid.species()),
                )
            })
    }
}

/// Options of [`flash_pt_with_solids`].
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
#[serde(default)]
pub struct SolidFlashOptions {
    /// Options of the fluid flashes.
    pub flash: FlashOptions,
    /// Tolerance on |ln f_j^fluid − ln f_j^s| for present solids and on negative margins of
    /// absent ones (dimensionless).
    pub tolerance: f64,
}

impl Default for SolidFlashOptions {
    fn default() -> Self {
        SolidFlashOptions {
            flash: FlashOptions::default(),
            tolerance: 1e-9,
        }
    }
}

/// A solid phase present in the result.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct SolidPhaseResult {
    /// Index of the candidate in the list passed in.
    pub candidate: usize,
    /// Fluid component index of the species.
    pub component: usize,
    /// Species name.
    pub species: String,
    /// Amount, mol.
    pub amount: f64,
    /// Amount over the total feed amount.
    pub fraction: f64,
    /// Molar volume, m3/mol.
    pub molar_volume: f64,
    /// ln of the solid's fugacity, ln(f/Pa).
    pub ln_fugacity: f64,
}

/// The stability margin of one candidate solid at the result.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct SolidMargin {
    /// Index of the candidate in the list passed in.
    pub candidate: usize,
    /// Species name.
    pub species: String,
    /// Whether the solid is present.
    pub present: bool,
    /// Whether the solid model could be evaluated at (T, p); a solid outside its model's
    /// validity range is not considered, and its other fields are zero.
    pub evaluated: bool,
    /// ln f_j^s, ln(f/Pa).
    pub ln_fugacity_solid: f64,
    /// ln f_j of the species in the fluid, ln(f/Pa) (−∞ is reported as −1e300 when the
    /// species is absent from the fluid).
    pub ln_fugacity_fluid: f64,
    /// ln f_j^s − ln f_j^fluid: ≥ 0 for an absent solid that is stable, ≈ 0 for a present
    /// one in equilibrium with a fluid, and < 0 when a feed of that species alone froze
    /// entirely (no fluid remains; ln f_j^fluid is then that of the feed flashed as a fluid
    /// at (T, p), above the solid's).
    pub margin: f64,
}

/// How the solid flash reached its answer.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, Default)]
pub struct SolidFlashDiagnostics {
    /// Active-set iterations.
    pub active_set_iterations: usize,
    /// Inner (false-position) iterations over all active sets.
    pub inner_iterations: usize,
    /// Fluid flashes performed.
    pub fluid_flashes: usize,
    /// max |ln f_j^fluid − ln f_j^s| over present solids.
    pub residual: f64,
    /// The least margin over absent evaluated solids (+∞ reported as 1e300 if none).
    pub min_absent_margin: f64,
}

/// Result of a PT flash with solids.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct SolidFlashResult {
    /// Temperature, K.
    pub temperature: f64,
    /// Pressure, Pa.
    pub pressure: f64,
    /// Total feed amounts, mol.
    pub feed: Vec<f64>,
    /// The flash of the fluid part (its `feed` is what remains fluid; its phase fractions
    /// are relative to that fluid amount). `None` when no fluid remains (a pure species
    /// entirely solid).
    pub fluid: Option<FlashResult>,
    /// Fluid phase amounts over the total feed, in the order of `fluid.phases`.
    pub fluid_fractions: Vec<f64>,
    /// The solids present.
    pub solids: Vec<SolidPhaseResult>,
    /// Every candidate's margin: the stability certificate of the solids.
    pub margins: Vec<SolidMargin>,
    /// How the answer was reached.
    pub diagnostics: SolidFlashDiagnostics,
}

/// ln f_j of component j in a fluid flash result (from its first phase; all phases agree at
/// equilibrium), ln(f/Pa); −∞ if j is absent.
fn ln_f_fluid(r: &FlashResult, j: usize) -> f64 {
    let ph = &r.phases[0];
    let x = ph.composition[j];
    if x > 0.0 {
        x.ln() + ph.ln_phi[j] + r.pressure.ln()
    } else {
        f64::NEG_INFINITY
    }
}

fn finite_or(x: f64, v: f64) -> f64 {
    if x.is_finite() { x } else { v }
}

/// PT flash of feed amounts `n` (mol) at T (K) and p (Pa) over the fluid phases of `model`
/// and the pure solids `solids`. See the module docs for the conditions and the method.
pub fn flash_pt_with_solids<M: FluidModel + ?Sized>(
    model: &M,
    solids: &[SolidPhaseSpec<'_>],
    t: f64,
    p: f64,
    n: &[f64],
    opts: &SolidFlashOptions,
) -> Result<SolidFlashResult> {
    check::temperature(t)?;
    check::pressure(p)?;
    let nc = model.num_components();
    let ntot = check::amounts(n, nc)?;
    if !(opts.tolerance > 0.0 && opts.tolerance < 1e-2) {
        return Err(Error::invalid(
            "tolerance",
            format!("{}; a value in (0, 1e-2) is required", opts.tolerance),
        ));
    }
    // Solid fugacities; per species keep the most stable evaluable solid as the candidate.
    let mut ln_fs = vec![f64::NAN; solids.len()];
    let mut best_of: Vec<Option<usize>> = vec![None; nc];
    for (k, s) in solids.iter().enumerate() {
        if s.component >= nc {
            return Err(Error::invalid(
                "solid",
                format!("component index {} for a model of {nc} components", s.component),
            ));
        }
        if s.model.species() != model.component_name(s.component) {
            return Err(Error::invalid(
                "solid",
                format!(
                    "a solid of '{}' given for component '{}'",
                    s.model.species(),
                    model.component_name(s.component)
                ),
            ));
        }
        let ig = model.ideal_gas(t, s.component)?;
        match s.model.ln_fugacity(t, p, &ig) {
            Ok(v) => {
                ln_fs[k] = v;
                let j = s.component;
                if n[j] > 0.0 && best_of[j].is_none_or(|b| v < ln_fs[b]) {
                    best_of[j] = Some(k);
                }
            }
            Err(e) if e.kind() == crate::ErrorKind::OutsideValidity => {}
            Err(e) => return Err(e),
        }
    }
    let cands: Vec<usize> = best_of.iter().flatten().copied().collect();
    let mut diag = SolidFlashDiagnostics::default();
    let mut ctx = FlashContext::new(nc);

    // A feed of one species: compare the pure solid with the pure fluid directly.
    let positive: Vec<usize> = (0..nc).filter(|&i| n[i] > 0.0).collect();
    if positive.len() == 1
        && let Some(&k) = cands.first()
    {
        let j = positive[0];
        let fl = ctx.flash(model, t, p, n, &opts.flash)?.clone();
        diag.fluid_flashes += 1;
        let lf = ln_f_fluid(&fl, j);
        let margin = ln_fs[k] - lf;
        if margin < 0.0 {
            let v = solids[k].model.properties(t, p)?.molar_volume;
            diag.min_absent_margin = 1e300;
            return Ok(SolidFlashResult {
                temperature: t,
                pressure: p,
                feed: n.to_vec(),
                fluid: None,
                fluid_fractions: vec![],
                solids: vec![SolidPhaseResult {
                    candidate: k,
                    component: j,
                    species: solids[k].model.species().to_string(),
                    amount: ntot,
                    fraction: 1.0,
                    molar_volume: v,
                    ln_fugacity: ln_fs[k],
                }],
                margins: margins(solids, &ln_fs, &[k], |_| lf),
                diagnostics: diag,
            });
        }
    }

    let mut active: Vec<usize> = Vec::new(); // candidate indices present
    let mut u: Vec<f64> = Vec::new(); // ln r_j of the active solids
    let mut nf = n.to_vec();
    let mut result: FlashResult;
    for outer in 1..=(2 * cands.len() + 2) {
        diag.active_set_iterations = outer;
        result = solve_active(
            model, solids, &active, &mut u, &ln_fs, t, p, n, &mut nf, &mut ctx, opts, &mut diag,
        )?;
        // Drop solids whose amount would be ≤ 0 (the fluid holds all of the species).
        let mut dropped = false;
        for a in (0..active.len()).rev() {
            let j = solids[active[a]].component;
            if u[a] >= n[j].ln() - 1e-14 {
                active.remove(a);
                u.remove(a);
                dropped = true;
            }
        }
        if dropped {
            continue;
        }
        // Add the most supersaturated absent candidate.
        let mut worst: Option<(f64, usize)> = None;
        for &k in &cands {
            if active.contains(&k) {
                continue;
            }
            let m = ln_fs[k] - ln_f_fluid(&result, solids[k].component);
            if m < -opts.tolerance && worst.is_none_or(|(w, _)| m < w) {
                worst = Some((m, k));
            }
        }
        match worst {
            Some((_, k)) => {
                active.push(k);
                // Start from the amount that would bring an ideal fluid to saturation.
                let j = solids[k].component;
                let lf = ln_f_fluid(&result, j);
                u.push((n[j].ln() + (ln_fs[k] - lf)).min(n[j].ln() - 1e-6));
            }
            None => {
                // Converged: assemble.
                let mut out_solids = Vec::new();
                for (a, &k) in active.iter().enumerate() {
                    let j = solids[k].component;
                    let amount = n[j] - u[a].exp();
                    out_solids.push(SolidPhaseResult {
                        candidate: k,
                        component: j,
                        species: solids[k].model.species().to_string(),
                        amount,
                        fraction: amount / ntot,
                        molar_volume: solids[k].model.properties(t, p)?.molar_volume,
                        ln_fugacity: ln_fs[k],
                    });
                }
                let ms = margins(solids, &ln_fs, &active, |j| ln_f_fluid(&result, j));
                diag.residual = ms
                    .iter()
                    .filter(|m| m.present)
                    .map(|m| m.margin.abs())
                    .fold(0.0, f64::max);
                diag.min_absent_margin = ms
                    .iter()
                    .filter(|m| !m.present && m.evaluated)
                    .map(|m| m.margin)
                    .fold(1e300, f64::min);
                let fractions = result.phases.iter().map(|ph| ph.amount / ntot).collect();
                return Ok(SolidFlashResult {
                    temperature: t,
                    pressure: p,
                    feed: n.to_vec(),
                    fluid: Some(result),
                    fluid_fractions: fractions,
                    solids: out_solids,
                    margins: ms,
                    diagnostics: diag,
                });
            }
        }
    }
    Err(Error::not_converged(
        "solid–fluid active set",
        vec![
            ("active-set".into(), diag.active_set_iterations),
            ("false position".into(), diag.inner_iterations),
        ],
        diag.residual,
        opts.tolerance,
    ))
}

fn margins(
    solids: &[SolidPhaseSpec<'_>],
    ln_fs: &[f64],
    present: &[usize],
    ln_f: impl Fn(usize) -> f64,
) -> Vec<SolidMargin> {
    solids
        .iter()
        .enumerate()
        .map(|(k, s)| {
            let evaluated = ln_fs[k].is_finite();
            let lf = if evaluated { ln_f(s.component) } else { 0.0 };
            SolidMargin {
                candidate: k,
                species: s.model.species().to_string(),
                present: present.contains(&k),
                evaluated,
                ln_fugacity_solid: if evaluated { ln_fs[k] } else { 0.0 },
                ln_fugacity_fluid: finite_or(lf, -1e300),
                margin: if evaluated {
                    finite_or(ln_fs[k] - lf, 1e300)
                } else {
                    0.0
                },
            }
        })
        .collect()
}

/// Solves ln f_j^fluid(r) = ln f_j^s for the active solids in u = ln r: each solid's
/// equation by bracketed false position (Illinois) in its own u with the others held,
/// swept in turn (Gauss–Seidel) until all hold; one sweep for one solid. False position needs
/// no slope, so it is robust where a condensed fluid phase rich in the species pins its
/// fugacity (a flat stretch of ln f(u)). Writes the fluid amounts into `nf` and returns the
/// fluid flash at the solution; with no active solid, just the flash of the feed.
#[allow(clippy::too_many_arguments)]
fn solve_active<M: FluidModel + ?Sized>(
    model: &M,
    solids: &[SolidPhaseSpec<'_>],
    active: &[usize],
    u: &mut [f64],
    ln_fs: &[f64],
    t: f64,
    p: f64,
    n: &[f64],
    nf: &mut [f64],
    ctx: &mut FlashContext,
    opts: &SolidFlashOptions,
    diag: &mut SolidFlashDiagnostics,
) -> Result<FlashResult> {
    let na = active.len();
    let comps: Vec<usize> = active.iter().map(|&k| solids[k].component).collect();
    let mut eval = |u: &[f64], nf: &mut [f64], diag: &mut SolidFlashDiagnostics| -> Result<(FlashResult, Vec<f64>)> {
        nf.copy_from_slice(n);
        for (a, &j) in comps.iter().enumerate() {
            nf[j] = u[a].exp();
        }
        diag.fluid_flashes += 1;
        let r = ctx.flash(model, t, p, nf, &opts.flash)?.clone();
        let h = comps
            .iter()
            .zip(active)
            .map(|(&j, &k)| ln_f_fluid(&r, j) - ln_fs[k])
            .collect();
        Ok((r, h))
    };
    let (mut r, mut h) = eval(u, nf, diag)?;
    if na == 0 {
        return Ok(r);
    }
    let norm = |h: &[f64]| h.iter().fold(0.0f64, |m, x| m.max(x.abs()));
    let umax: Vec<f64> = comps.iter().map(|&j| n[j].ln()).collect();
    let sweeps = if na == 1 { 1 } else { 100 };
    for _ in 0..sweeps {
        for a in 0..na {
            if h[a].abs() < 0.1 * opts.tolerance {
                continue;
            }
            // h_a rises with u_a. Upper end: u_a itself if h_a > 0, else all of j in the fluid.
            let mut trial = u.to_vec();
            let (mut b, mut fb) = (u[a], h[a]);
            if !(fb > 0.0) {
                b = umax[a];
                trial[a] = b;
                fb = eval(&trial, nf, diag)?.1[a];
                if !(fb > 0.0) {
                    // Undersaturated even with all of the species fluid: the caller drops it.
                    u[a] = umax[a];
                    let (rr, hh) = eval(u, nf, diag)?;
                    r = rr;
                    h = hh;
                    continue;
                }
            }
            let (mut lo, mut flo) = (b, fb);
            let mut step = if h[a] > 0.0 { h[a].max(0.5) } else { 1.0 };
            let mut bracketed = false;
            for _ in 0..80 {
                lo -= step;
                step *= 2.0;
                trial[a] = lo;
                flo = eval(&trial, nf, diag)?.1[a];
                if flo < 0.0 {
                    bracketed = true;
                    break;
                }
                b = lo;
                fb = flo;
            }
            if !bracketed {
                return Err(Error::NoSolution(format!(
                    "the fluid cannot be brought to saturation with the solid of component {} at T = {t} K, p = {p} Pa",
                    comps[a],
                    t = num(t),
                    p = num(p)
                )));
            }
            let mut side = 0;
            let mut done = false;
            for _ in 0..200 {
                diag.inner_iterations += 1;
                let c = (lo * fb - b * flo) / (fb - flo);
                trial[a] = c;
                let (rc, hc) = eval(&trial, nf, diag)?;
                let fc = hc[a];
                if fc.abs() < 0.1 * opts.tolerance || (b - lo).abs() < 1e-15 * c.abs().max(1.0) {
                    u[a] = c;
                    r = rc;
                    h = hc;
                    done = true;
                    break;
                }
                if fc > 0.0 {
                    b = c;
                    fb = fc;
                    if side == 1 {
                        flo *= 0.5;
                    }
                    side = 1;
                } else {
                    lo = c;
                    flo = fc;
                    if side == -1 {
                        fb *= 0.5;
                    }
                    side = -1;
                }
            }
            if !done {
                return Err(Error::not_converged(
                    "solid–fluid equilibrium (false position in ln r)",
                    vec![("false position".into(), diag.inner_iterations)],
                    h[a].abs(),
                    opts.tolerance,
                ));
            }
        }
        diag.residual = norm(&h);
        let all_max = u.iter().zip(&umax).any(|(x, m)| *x >= *m);
        if diag.residual < opts.tolerance || all_max {
            return Ok(r);
        }
    }
    Err(Error::not_converged(
        "solid–fluid equilibrium (Gauss–Seidel sweeps)",
        vec![("false position".into(), diag.inner_iterations)],
        norm(&h),
        opts.tolerance,
    ))
}

/// The frost point: the temperature (K) at which the pure solid `solid` first appears from
/// the fluid of amounts `n` (mol) at pressure p (Pa), i.e. ln f_j^fluid(T, p, n) = ln f_j^s(T, p)
/// with the fluid flashed at the feed. Solved by bracketing from `t_guess` (K) in steps of
/// 2 % and the Illinois false-position method on h(T) = ln f_j^fluid − ln f_j^s.
pub fn frost_point_temperature<M: FluidModel + ?Sized>(
    model: &M,
    solid: SolidPhaseSpec<'_>,
    p: f64,
    n: &[f64],
    t_guess: f64,
    opts: &FlashOptions,
) -> Result<f64> {
    check::pressure(p)?;
    check::temperature(t_guess)?;
    let nc = model.num_components();
    check::amounts(n, nc)?;
    let j = solid.component;
    if j >= nc || n[j] <= 0.0 {
        return Err(Error::invalid(
            "solid",
            "the solid's species must be a component present in the feed",
        ));
    }
    let mut ctx = FlashContext::new(nc);
    let mut h = |t: f64| -> Result<f64> {
        let ig = model.ideal_gas(t, j)?;
        let lfs = solid.model.ln_fugacity(t, p, &ig)?;
        let r = ctx.flash(model, t, p, n, opts)?;
        Ok(ln_f_fluid(r, j) - lfs)
    };
    // h decreases with T (the solid's fugacity rises steeply). Bracket.
    let (mut a, mut fa) = (t_guess, h(t_guess)?);
    let mut b = t_guess;
    let mut fb = fa;
    let dir = if fa > 0.0 { 1.0 } else { -1.0 };
    for _ in 0..60 {
        b *= 1.0 + 0.02 * dir;
        fb = h(b)?;
        if fb.signum() != fa.signum() {
            break;
        }
        a = b;
        fa = fb;
    }
    if fb.signum() == fa.signum() {
        return Err(Error::NoSolution(format!(
            "no frost point of '{}' found near {t_guess} K at p = {p} Pa",
            solid.model.species(),
            p = num(p)
        )));
    }
    let tol = 1e-12;
    let mut side = 0;
    let mut last = f64::INFINITY;
    for _ in 0..200 {
        let c = (a * fb - b * fa) / (fb - fa);
        let fc = h(c)?;
        last = fc.abs();
        if fc.abs() < tol || (b - a).abs() < 1e-13 * c {
            return Ok(c);
        }
        if fc.signum() == fb.signum() {
            b = c;
            fb = fc;
            if side == -1 {
                fa *= 0.5;
            }
            side = -1;
        } else {
            a = c;
            fa = fc;
            if side == 1 {
                fb *= 0.5;
            }
            side = 1;
        }
    }
    Err(Error::not_converged(
        "frost point",
        vec![("false position".into(), 200)],
        last,
        tol,
    ))
}
