//! The UNIFAC group-contribution model (Fredenslund, Jones & Prausnitz 1975, *AIChE J.*
//! 21:1086–1099) with its embedded parameter table (`core/data/unifac.toml`).

use super::uniquac::combinatorial;
use super::{
    ExcessDerivs, ExcessGibbs, ParamId, Residual, check_call, check_names, check_range, finish, mul_abt, scratch,
};
use crate::error::{Error, Result, num};
use crate::model::Need;
use serde::{Deserialize, Serialize};
use std::collections::BTreeMap;
use std::sync::OnceLock;

const EMBEDDED: &str = include_str!("../../../data/unifac.toml");

/// One UNIFAC subgroup: its name, main group, and Bondi volume and area parameters.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct UnifacSubgroup {
    /// Subgroup name, e.g. "CH3".
    pub name: String,
    /// Name of its main group, e.g. "CH2".
    pub main: String,
    /// Relative van der Waals volume R_k (dimensionless).
    pub r: f64,
    /// Relative van der Waals surface area Q_k (dimensionless).
    pub q: f64,
}

/// The group-interaction parameters of two main groups m and n, in K
/// (Ψ_mn = exp(−a_mn/T)).
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct UnifacInteraction {
    /// Main group m.
    pub m: String,
    /// Main group n.
    pub n: String,
    /// a_mn, K.
    pub a_mn: f64,
    /// a_nm, K.
    pub a_nm: f64,
}

/// A UNIFAC parameter table: subgroups, main-group interactions and group decompositions of
/// molecules. [`UnifacTable::embedded`] holds the revised VLE table of Hansen, Rasmussen,
/// Fredenslund, Schiller & Gmehling (1991), *Ind. Eng. Chem. Res.* 30:2352, for the groups of
/// alkanes, aromatics, alcohols, methanol, water and ketones (values recalled, marked "from
/// memory" in the file).
#[derive(Debug, Clone, PartialEq)]
pub struct UnifacTable {
    t_range: (f64, f64),
    subgroups: Vec<UnifacSubgroup>,
    interactions: BTreeMap<(String, String), f64>,
    molecules: Vec<Molecule>,
}

/// A molecule of the table: name, look-up keys (name and aliases, lower case), groups.
type Molecule = (String, Vec<String>, Vec<(String, u32)>);

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct FileMeta {
    t_min: f64,
    t_max: f64,
    #[allow(dead_code)]
    source: String,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct FileMain {
    #[allow(dead_code)]
    id: u32,
    name: String,
    #[allow(dead_code)]
    source: String,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct FileSub {
    #[allow(dead_code)]
    id: u32,
    name: String,
    main: String,
    r: f64,
    q: f64,
    #[allow(dead_code)]
    source: String,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct FileInteraction {
    m: String,
    n: String,
    a_mn: f64,
    a_nm: f64,
    #[allow(dead_code)]
    source: String,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct FileMolecule {
    name: String,
    #[serde(default)]
    aliases: Vec<String>,
    groups: BTreeMap<String, u32>,
    #[allow(dead_code)]
    source: String,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct File {
    meta: FileMeta,
    main_group: Vec<FileMain>,
    subgroup: Vec<FileSub>,
    interaction: Vec<FileInteraction>,
    #[serde(default)]
    molecule: Vec<FileMolecule>,
}

fn norm(s: &str) -> String {
    s.trim().to_lowercase()
}

impl UnifacTable {
    /// The table compiled into the library (parsed once, then shared).
    pub fn embedded() -> &'static UnifacTable {
        static TABLE: OnceLock<UnifacTable> = OnceLock::new();
        TABLE.get_or_init(|| {
            // The embedded file is checked by the test suite; a failure here is a build defect.
            UnifacTable::from_toml_str(EMBEDDED).unwrap_or_else(|e| panic!("the embedded UNIFAC table is invalid: {e}"))
        })
    }

    /// Parses and checks a table in the schema of `core/data/unifac.toml` (every entry with a
    /// `source`; R > 0, Q >= 0 and a finite; subgroups of declared main groups; no duplicates;
    /// molecules made of known subgroups).
    pub fn from_toml_str(text: &str) -> Result<UnifacTable> {
        let f: File = toml::from_str(text).map_err(|e| Error::Data(format!("UNIFAC table: {e}")))?;
        check_range(f.meta.t_min, f.meta.t_max).map_err(|e| Error::Data(format!("UNIFAC table: {}", e.message())))?;
        let mains: Vec<String> = f.main_group.iter().map(|m| m.name.clone()).collect();
        let bad = |s: String| Err(Error::Data(format!("UNIFAC table: {s}")));
        for (i, m) in mains.iter().enumerate() {
            if mains[..i].contains(m) {
                return bad(format!("main group '{m}' is listed twice"));
            }
        }
        let mut subgroups: Vec<UnifacSubgroup> = Vec::new();
        for s in f.subgroup {
            if !mains.contains(&s.main) {
                return bad(format!(
                    "subgroup '{}' names an unlisted main group '{}'",
                    s.name, s.main
                ));
            }
            if !(s.r > 0.0) || !s.r.is_finite() || !(s.q >= 0.0) || !s.q.is_finite() {
                return bad(format!(
                    "subgroup '{}' has R = {}, Q = {}; R > 0, Q >= 0 are required",
                    s.name,
                    num(s.r),
                    num(s.q)
                ));
            }
            if subgroups.iter().any(|x| x.name == s.name) {
                return bad(format!("subgroup '{}' is listed twice", s.name));
            }
            subgroups.push(UnifacSubgroup {
                name: s.name,
                main: s.main,
                r: s.r,
                q: s.q,
            });
        }
        let mut interactions = BTreeMap::new();
        for x in f.interaction {
            for g in [&x.m, &x.n] {
                if !mains.contains(g) {
                    return bad(format!("interaction names an unlisted main group '{g}'"));
                }
            }
            if x.m == x.n || !x.a_mn.is_finite() || !x.a_nm.is_finite() {
                return bad(format!(
                    "interaction {}–{} is invalid (same group or non-finite value)",
                    x.m, x.n
                ));
            }
            if interactions.insert((x.m.clone(), x.n.clone()), x.a_mn).is_some()
                || interactions.insert((x.n.clone(), x.m.clone()), x.a_nm).is_some()
            {
                return bad(format!("interaction {}–{} is listed twice", x.m, x.n));
            }
        }
        let mut molecules = Vec::new();
        let mut seen: Vec<String> = Vec::new();
        for m in f.molecule {
            let mut groups = Vec::new();
            for (g, &c) in &m.groups {
                if !subgroups.iter().any(|s| &s.name == g) || c == 0 {
                    return bad(format!(
                        "molecule '{}' has an unknown subgroup '{g}' or a zero count",
                        m.name
                    ));
                }
                groups.push((g.clone(), c));
            }
            let keys: Vec<String> = std::iter::once(&m.name).chain(&m.aliases).map(|s| norm(s)).collect();
            for k in &keys {
                if seen.contains(k) {
                    return bad(format!("molecule name or alias '{k}' is used twice"));
                }
                seen.push(k.clone());
            }
            molecules.push((m.name, keys, groups));
        }
        Ok(UnifacTable {
            t_range: (f.meta.t_min, f.meta.t_max),
            subgroups,
            interactions,
            molecules,
        })
    }

    /// The temperature range (K) in which the table may be used.
    pub fn temperature_range(&self) -> (f64, f64) {
        self.t_range
    }

    /// A subgroup by name.
    pub fn subgroup(&self, name: &str) -> Option<&UnifacSubgroup> {
        self.subgroups.iter().find(|s| s.name == name)
    }

    /// a_mn (K) of main groups m and n (0 for m = n), if the table has it.
    pub fn interaction(&self, m: &str, n: &str) -> Option<f64> {
        if m == n {
            Some(0.0)
        } else {
            self.interactions.get(&(m.to_string(), n.to_string())).copied()
        }
    }

    /// The group decomposition of a molecule by name or alias (case-insensitive), as
    /// (subgroup, count) pairs. An unknown name is [`Error::UnknownComponent`].
    pub fn molecule(&self, name: &str) -> Result<&[(String, u32)]> {
        let key = norm(name);
        self.molecules
            .iter()
            .find(|(_, keys, _)| keys.contains(&key))
            .map(|(_, _, g)| g.as_slice())
            .ok_or_else(|| Error::UnknownComponent {
                name: name.to_string(),
                suggestions: self
                    .molecules
                    .iter()
                    .filter(|(n, _, _)| {
                        let n = norm(n);
                        n.contains(&key) || key.contains(&n) || n.get(..3) == key.get(..3)
                    })
                    .map(|(n, _, _)| n.clone())
                    .collect(),
            })
    }

    /// The names of the molecules whose decompositions the table holds.
    pub fn molecule_names(&self) -> impl Iterator<Item = &str> {
        self.molecules.iter().map(|(n, _, _)| n.as_str())
    }

    /// r = Σ ν_k R_k and q = Σ ν_k Q_k of a molecule given as (subgroup, count) pairs: the
    /// UNIQUAC size and area parameters from Bondi's group increments. An unknown subgroup is
    /// [`Error::InvalidInput`] naming it.
    pub fn r_q(&self, groups: &[(&str, u32)]) -> Result<(f64, f64)> {
        let (mut r, mut q) = (0.0, 0.0);
        for &(g, c) in groups {
            let s = self.subgroup(g).ok_or_else(|| unknown_groups(&[g.to_string()]))?;
            r += c as f64 * s.r;
            q += c as f64 * s.q;
        }
        Ok((r, q))
    }

    /// The self-contained parameters of a UNIFAC model of `components`, each given as (name,
    /// (subgroup, count) pairs): the subgroups used and the interactions of their main groups.
    /// Unknown subgroups, and main-group pairs without parameters, are
    /// [`Error::InvalidInput`] naming them all.
    pub fn params(&self, components: &[(&str, &[(&str, u32)])]) -> Result<UnifacParams> {
        let mut unknown = Vec::new();
        let mut used: Vec<&UnifacSubgroup> = Vec::new();
        for (_, groups) in components {
            for &(g, _) in *groups {
                match self.subgroup(g) {
                    Some(s) => {
                        if !used.iter().any(|u| u.name == s.name) {
                            used.push(s)
                        }
                    }
                    None => {
                        if !unknown.contains(&g.to_string()) {
                            unknown.push(g.to_string())
                        }
                    }
                }
            }
        }
        if !unknown.is_empty() {
            return Err(unknown_groups(&unknown));
        }
        // In the table's order, so that a model does not depend on the order groups were given.
        used.sort_by_key(|u| self.subgroups.iter().position(|s| s.name == u.name));
        let mut mains: Vec<&str> = Vec::new();
        for s in &used {
            if !mains.contains(&s.main.as_str()) {
                mains.push(&s.main);
            }
        }
        let mut interactions = Vec::new();
        let mut missing = Vec::new();
        for (i, m) in mains.iter().enumerate() {
            for n in &mains[i + 1..] {
                match (self.interaction(m, n), self.interaction(n, m)) {
                    (Some(a_mn), Some(a_nm)) => interactions.push(UnifacInteraction {
                        m: m.to_string(),
                        n: n.to_string(),
                        a_mn,
                        a_nm,
                    }),
                    _ => missing.push(format!("{m}–{n}")),
                }
            }
        }
        if !missing.is_empty() {
            return Err(Error::invalid(
                "UNIFAC groups",
                format!(
                    "no interaction parameters in the table for the main groups {}",
                    missing.join(", ")
                ),
            ));
        }
        Ok(UnifacParams {
            components: components.iter().map(|(n, _)| n.to_string()).collect(),
            groups: components
                .iter()
                .map(|(_, g)| g.iter().map(|&(s, c)| (s.to_string(), c)).collect())
                .collect(),
            subgroups: used.into_iter().cloned().collect(),
            interactions,
            t_min: self.t_range.0,
            t_max: self.t_range.1,
        })
    }
}

fn unknown_groups(names: &[String]) -> Error {
    Error::invalid(
        "UNIFAC groups",
        format!("unknown subgroup(s) {}: not in the UNIFAC table", names.join(", ")),
    )
}

/// Parameters of a [`Unifac`] model (and its serialised form): self-contained, holding the
/// subgroups and main-group interactions the components use.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct UnifacParams {
    /// Component names, in order.
    pub components: Vec<String>,
    /// Group decomposition of each component: subgroup name → count.
    pub groups: Vec<BTreeMap<String, u32>>,
    /// The subgroups used.
    pub subgroups: Vec<UnifacSubgroup>,
    /// The interactions of every pair of main groups used.
    pub interactions: Vec<UnifacInteraction>,
    /// Lowest temperature at which the parameters may be used, K.
    pub t_min: f64,
    /// Highest temperature at which the parameters may be used, K.
    pub t_max: f64,
}

/// The UNIFAC model (Fredenslund, Jones & Prausnitz 1975, *AIChE J.* 21:1086):
///
/// ln γ_i = ln γ_i^C + Σ_k ν_ki (ln Γ_k − ln Γ_k^(i)),
///
/// with the UNIQUAC combinatorial term (z = 10) on r_i = Σ_k ν_ki R_k, q_i = Σ_k ν_ki Q_k, and
/// ln Γ_k = Q_k [1 − ln(Σ_m Θ_m Ψ_mk) − Σ_m Θ_m Ψ_km/Σ_n Θ_n Ψ_nm], Θ_m the area fraction of
/// group m, Ψ_mn = exp(−a_mn/T) by main group; ln Γ_k^(i) is the same in pure i. Derivatives
/// are analytic; evaluations allocate nothing after the first with the same [`ExcessDerivs`].
///
/// ```
/// use tieline::model::activity::Unifac;
/// use tieline::model::{ExcessDerivs, ExcessGibbs, Need};
/// let m = Unifac::from_names(&["ethanol", "water"]).unwrap();
/// let mut out = ExcessDerivs::new(2);
/// m.excess(350.0, &[0.3, 0.7], Need::VALUES, &mut out).unwrap();
/// assert!(out.ln_gamma[0] > 0.0);
/// ```
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(try_from = "UnifacParams", into = "UnifacParams")]
pub struct Unifac {
    params: UnifacParams,
    /// ν_ki, row-major nc × ng.
    nu: Vec<f64>,
    /// Q_k of the subgroups.
    qk: Vec<f64>,
    /// a of the subgroups' main groups, ng × ng, K.
    a: Vec<f64>,
    r: Vec<f64>,
    q: Vec<f64>,
    id: ParamId,
}

impl Unifac {
    /// Builds the model from self-contained parameters (see [`UnifacTable::params`]).
    /// Unknown subgroups, missing main-group interactions, repeated names, zero counts,
    /// components without surface area or a bad temperature range are
    /// [`Error::InvalidInput`].
    pub fn new(params: UnifacParams) -> Result<Unifac> {
        check_names(&params.components)?;
        check_range(params.t_min, params.t_max)?;
        let nc = params.components.len();
        if params.groups.len() != nc {
            return Err(Error::invalid(
                "UNIFAC groups",
                format!("{} decompositions given for {nc} components", params.groups.len()),
            ));
        }
        let subs = &params.subgroups;
        let ng = subs.len();
        for (k, s) in subs.iter().enumerate() {
            if !(s.r > 0.0) || !s.r.is_finite() || !(s.q >= 0.0) || !s.q.is_finite() {
                return Err(Error::invalid(
                    "UNIFAC subgroups",
                    format!(
                        "'{}' has R = {}, Q = {}; finite R > 0, Q >= 0 are required",
                        s.name,
                        num(s.r),
                        num(s.q)
                    ),
                ));
            }
            if subs[..k].iter().any(|x| x.name == s.name) {
                return Err(Error::invalid(
                    "UNIFAC subgroups",
                    format!("'{}' is listed twice", s.name),
                ));
            }
        }
        let mut nu = vec![0.0; nc * ng];
        let mut unknown = Vec::new();
        for (i, g) in params.groups.iter().enumerate() {
            if g.is_empty() {
                return Err(Error::invalid(
                    "UNIFAC groups",
                    format!("component '{}' has no groups", params.components[i]),
                ));
            }
            for (name, &c) in g {
                if c == 0 {
                    return Err(Error::invalid(
                        "UNIFAC groups",
                        format!("component '{}' has a zero count of '{name}'", params.components[i]),
                    ));
                }
                match subs.iter().position(|s| &s.name == name) {
                    Some(k) => nu[i * ng + k] = c as f64,
                    None => unknown.push(name.clone()),
                }
            }
        }
        if !unknown.is_empty() {
            return Err(unknown_groups(&unknown));
        }
        let mut a = vec![0.0; ng * ng];
        let mut missing = Vec::new();
        for (k, sk) in subs.iter().enumerate() {
            for (l, sl) in subs.iter().enumerate() {
                if sk.main == sl.main {
                    continue;
                }
                let found = params.interactions.iter().find_map(|x| {
                    if x.m == sk.main && x.n == sl.main {
                        Some(x.a_mn)
                    } else if x.n == sk.main && x.m == sl.main {
                        Some(x.a_nm)
                    } else {
                        None
                    }
                });
                match found {
                    Some(v) if v.is_finite() => a[k * ng + l] = v,
                    Some(v) => {
                        return Err(Error::invalid(
                            "UNIFAC interactions",
                            format!("a({}, {}) = {}; finite values are required", sk.main, sl.main, num(v)),
                        ));
                    }
                    None => {
                        let pair = format!("{}–{}", (&sk.main).min(&sl.main), (&sk.main).max(&sl.main));
                        if !missing.contains(&pair) {
                            missing.push(pair);
                        }
                    }
                }
            }
        }
        if !missing.is_empty() {
            return Err(Error::invalid(
                "UNIFAC groups",
                format!("no interaction parameters for the main groups {}", missing.join(", ")),
            ));
        }
        let qk: Vec<f64> = subs.iter().map(|s| s.q).collect();
        let mut r = vec![0.0; nc];
        let mut q = vec![0.0; nc];
        for i in 0..nc {
            for k in 0..ng {
                r[i] += nu[i * ng + k] * subs[k].r;
                q[i] += nu[i * ng + k] * subs[k].q;
            }
            if !(q[i] > 0.0) {
                return Err(Error::invalid(
                    "UNIFAC groups",
                    format!("component '{}' has no surface area (Q sum 0)", params.components[i]),
                ));
            }
        }
        Ok(Unifac {
            params,
            nu,
            qk,
            a,
            r,
            q,
            id: ParamId::fresh(),
        })
    }

    /// A model of molecules named in the embedded table ([`UnifacTable::embedded`]); an
    /// unknown name is [`Error::UnknownComponent`].
    pub fn from_names(names: &[&str]) -> Result<Unifac> {
        Unifac::from_table(names, UnifacTable::embedded())
    }

    /// A model of molecules named in `table`.
    pub fn from_table(names: &[&str], table: &UnifacTable) -> Result<Unifac> {
        let mut decomps: Vec<Vec<(&str, u32)>> = Vec::with_capacity(names.len());
        for n in names {
            decomps.push(table.molecule(n)?.iter().map(|(g, c)| (g.as_str(), *c)).collect());
        }
        let comps: Vec<(&str, &[(&str, u32)])> = names.iter().zip(&decomps).map(|(n, d)| (*n, d.as_slice())).collect();
        Unifac::new(table.params(&comps)?)
    }

    /// A model of components given as (name, (subgroup, count) pairs), with the embedded
    /// table's group parameters, e.g. `("ethanol", &[("CH3", 1), ("CH2", 1), ("OH", 1)])`.
    pub fn from_groups(components: &[(&str, &[(&str, u32)])]) -> Result<Unifac> {
        Unifac::new(UnifacTable::embedded().params(components)?)
    }

    /// The component names, in order.
    pub fn component_names(&self) -> &[String] {
        &self.params.components
    }

    /// The parameters (as [`Unifac::new`] takes them).
    pub fn params(&self) -> &UnifacParams {
        &self.params
    }

    /// r_i and q_i of component `i` (dimensionless group sums).
    pub fn r_q(&self, i: usize) -> (f64, f64) {
        (self.r[i], self.q[i])
    }
}

impl TryFrom<UnifacParams> for Unifac {
    type Error = Error;
    fn try_from(p: UnifacParams) -> Result<Unifac> {
        Unifac::new(p)
    }
}

impl From<Unifac> for UnifacParams {
    fn from(m: Unifac) -> UnifacParams {
        m.params
    }
}

impl ExcessGibbs for Unifac {
    fn num_components(&self) -> usize {
        self.params.components.len()
    }

    fn component_name(&self, i: usize) -> &str {
        &self.params.components[i]
    }

    fn temperature_range(&self) -> (f64, f64) {
        (self.params.t_min, self.params.t_max)
    }

    fn excess(&self, t: f64, n: &[f64], need: Need, out: &mut ExcessDerivs) -> Result<()> {
        let total = check_call(self, t, n, out)?;
        let nc = self.r.len();
        let ng = self.qk.len();
        let ExcessDerivs {
            g_excess,
            ln_gamma,
            dn,
            dt,
            scratch: store,
            ..
        } = out;
        // Layout: a 3-value key of the cached temperature terms (model identity, T, whether
        // the T-derivatives are included), Ψ, ∂Ψ/∂T, ln Γ_k^(i) and ∂ln Γ_k^(i)/∂T of the pure
        // components, then per-call storage.
        let s = scratch(
            store,
            3 + 3 * ng * ng + 3 * nc * ng + 3 * ng + nc + nc * nc + Residual::work_len(ng),
        );
        let (key, s) = s.split_at_mut(3);
        let (psi, s) = s.split_at_mut(ng * ng);
        let (dpsi, s) = s.split_at_mut(ng * ng);
        let (pure, s) = s.split_at_mut(nc * ng);
        let (dpure, s) = s.split_at_mut(nc * ng);
        let (dy, s) = s.split_at_mut(ng * ng);
        let (b, s) = s.split_at_mut(nc * ng);
        let (d, s) = s.split_at_mut(nc * nc);
        let (y, s) = s.split_at_mut(ng);
        let (val, s) = s.split_at_mut(ng);
        let (dval, s) = s.split_at_mut(ng);
        let (x, work) = s.split_at_mut(nc);
        if !self.id.cached(key, t, need.temperature) {
            for k in 0..ng * ng {
                let p = (-self.a[k] / t).exp();
                psi[k] = p;
                dpsi[k] = p * self.a[k] / (t * t);
            }
            // ln Γ_k^(i) of the pure components (and T-derivatives): functions of T only.
            for i in 0..nc {
                let kernel = Residual {
                    w: &self.qk,
                    y: &self.nu[i * ng..(i + 1) * ng],
                    p: psi,
                    dp: Some(dpsi),
                };
                kernel.eval(
                    &mut pure[i * ng..(i + 1) * ng],
                    None,
                    need.temperature.then_some(&mut dpure[i * ng..(i + 1) * ng]),
                    work,
                );
            }
            self.id.store(key, t, need.temperature);
        }
        // Group amounts of the mixture per mol of mixture, y_k = Σ_i ν_ki x_i.
        for i in 0..nc {
            x[i] = n[i] / total;
        }
        for k in 0..ng {
            let mut v = 0.0;
            for i in 0..nc {
                v += self.nu[i * ng + k] * x[i];
            }
            y[k] = v;
        }
        let kernel = Residual {
            w: &self.qk,
            y,
            p: psi,
            dp: Some(dpsi),
        };
        kernel.eval(
            val,
            need.composition.then_some(&mut *dy),
            need.temperature.then_some(&mut *dval),
            work,
        );
        if need.composition {
            dn[..nc * nc].iter_mut().for_each(|v| *v = 0.0);
        }
        combinatorial(
            &self.r,
            &self.q,
            x,
            ln_gamma,
            need.composition.then_some(&mut dn[..nc * nc]),
        );
        let (mut ge, mut dge) = (0.0, 0.0);
        for i in 0..nc {
            let (mut res, mut dres) = (0.0, 0.0);
            for k in 0..ng {
                let c = self.nu[i * ng + k];
                if c != 0.0 {
                    res += c * (val[k] - pure[i * ng + k]);
                    if need.temperature {
                        dres += c * (dval[k] - dpure[i * ng + k]);
                    }
                }
            }
            ln_gamma[i] += res;
            ge += x[i] * ln_gamma[i];
            if need.temperature {
                dt[i] = dres;
                dge += x[i] * dres;
            }
        }
        *g_excess = ge;
        if need.composition {
            // ∂ln γ_i^R/∂n_j = Σ_k Σ_l ν_ki (∂ln Γ_k/∂y_l) ν_lj / n_T, as (ν D) νᵀ with
            // D = ∂ln Γ/∂y symmetric, so that ν D = ν Dᵀ.
            mul_abt(&self.nu, dy, ng, b);
            mul_abt(b, &self.nu, ng, d);
            for i in 0..nc {
                for j in i..nc {
                    let c = (dn[i * nc + j] + d[i * nc + j]) / total;
                    dn[i * nc + j] = c;
                    dn[j * nc + i] = c;
                }
            }
        }
        finish(t, need, dge, out)
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::error::ErrorKind;
    use crate::model::activity::testing::check_model;

    #[test]
    fn embedded_table_reads_and_is_complete_for_its_molecules() {
        let t = UnifacTable::embedded();
        let names: Vec<&str> = t.molecule_names().collect();
        assert!(names.len() >= 13);
        // Every pair of molecules in the table can be modelled (all interactions present).
        let m = Unifac::from_names(&names).unwrap();
        assert_eq!(m.num_components(), names.len());
        assert_eq!(t.molecule("MEK").unwrap().len(), 3);
    }

    #[test]
    fn unifac_derivatives_and_identities() {
        let m = Unifac::from_names(&["water", "ethanol", "acetone", "toluene", "n-hexane"]).unwrap();
        check_model(&m, 330.0, &[0.3, 0.2, 0.2, 0.1, 0.2]);
        check_model(&m, 300.0, &[0.0, 0.5, 0.1, 0.0, 0.4]);
        let m = Unifac::from_names(&["methanol", "benzene"]).unwrap();
        check_model(&m, 320.0, &[0.7, 0.3]);
    }

    #[test]
    fn unifac_round_trip_and_typed_errors() {
        let m = Unifac::from_groups(&[
            ("ethanol", &[("CH3", 1), ("CH2", 1), ("OH", 1)]),
            ("water", &[("H2O", 1)]),
        ])
        .unwrap();
        let s = serde_json::to_string(&m).unwrap();
        assert_eq!(serde_json::from_str::<Unifac>(&s).unwrap(), m);
        assert_eq!(m, Unifac::from_names(&["ethanol", "water"]).unwrap());
        let e = Unifac::from_groups(&[("x", &[("CH3", 1), ("COOH", 1), ("XYZ", 2)])]).unwrap_err();
        assert_eq!(e.kind(), ErrorKind::InvalidInput);
        assert!(e.to_string().contains("COOH") && e.to_string().contains("XYZ"), "{e}");
        let e = Unifac::from_names(&["ethanol", "unobtainium"]).unwrap_err();
        assert_eq!(e.kind(), ErrorKind::UnknownComponent);
        // A table without the OH–H2O interaction names that pair.
        let text = EMBEDDED.replace("m = \"OH\"\nn = \"H2O\"", "m = \"OH\"\nn = \"OH\"");
        assert!(UnifacTable::from_toml_str(&text).is_err());
        let mut p = m.params().clone();
        p.interactions.clear();
        let e = Unifac::new(p).unwrap_err();
        assert!(e.to_string().contains("CH2–OH"), "{e}");
        let mut out = ExcessDerivs::new(2);
        let e = m.excess(500.0, &[1.0, 1.0], Need::VALUES, &mut out).unwrap_err();
        assert_eq!(e.kind(), ErrorKind::OutsideValidity);
    }

    #[test]
    fn unifac_pure_component_and_single_group_limits() {
        let m = Unifac::from_names(&["n-hexane", "n-heptane"]).unwrap();
        let mut out = ExcessDerivs::new(2);
        // Pure component: γ = 1.
        m.excess(320.0, &[0.0, 1.0], Need::ALL, &mut out).unwrap();
        assert!(out.ln_gamma[1].abs() < 1e-14);
        // Alkane/alkane: one main group, so the residual part vanishes and only the (small,
        // negative) combinatorial part remains.
        m.excess(320.0, &[0.5, 0.5], Need::ALL, &mut out).unwrap();
        assert!(
            out.ln_gamma.iter().all(|v| *v < 0.0 && *v > -0.01),
            "{:?}",
            out.ln_gamma
        );
        assert!(out.dt.iter().all(|v| v.abs() < 1e-15));
    }

    /// Reid, Prausnitz & Poling, *The Properties of Gases and Liquids*, 4th ed. (1987),
    /// UNIFAC worked example (Example 8-12 or near it; from memory): acetone(1)/n-pentane(2) at
    /// 307 K, x1 = 0.047, with r1 = 2.5735, q1 = 2.336, r2 = 3.8254, q2 = 3.316,
    /// a(CH2, CH2CO) = 476.40 K, a(CH2CO, CH2) = 26.760 K; the book gives γ1 = 4.99 and
    /// γ2 = 1.01 (from memory).
    #[test]
    fn unifac_acetone_n_pentane_textbook_example() {
        let m = Unifac::from_names(&["acetone", "n-pentane"]).unwrap();
        let (r1, q1) = m.r_q(0);
        let (r2, q2) = m.r_q(1);
        assert!((r1 - 2.5735).abs() < 1e-12 && (q1 - 2.336).abs() < 1e-12);
        assert!((r2 - 3.8254).abs() < 1e-12 && (q2 - 3.316).abs() < 1e-12);
        let mut out = ExcessDerivs::new(2);
        m.excess(307.0, &[0.047, 0.953], Need::VALUES, &mut out).unwrap();
        println!("acetone/n-pentane: ln γ = {:?}", out.ln_gamma);
        let g1 = out.ln_gamma[0].exp();
        let g2 = out.ln_gamma[1].exp();
        assert!((g1 - 4.99).abs() < 0.02, "γ1 = {g1}");
        assert!((g2 - 1.01).abs() < 0.006, "γ2 = {g2}");
    }
}
