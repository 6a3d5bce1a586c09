//! Binary parameters of the liquid-solution models from a sourced table
//! (`core/data/activity_pairs.toml`), and the constructors that build models from them.

use super::{Nrtl, NrtlParams, UnifacTable, Uniquac, UniquacParams, Wilson, WilsonParams};
use crate::error::{Error, Result, num};
use serde::Deserialize;
use std::collections::BTreeMap;
use std::sync::OnceLock;

const EMBEDDED: &str = include_str!("../../../data/activity_pairs.toml");

/// What to do when the table has no parameters for a pair of the components asked for.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum MissingPairs {
    /// A missing pair is an error naming it (the default choice).
    Refuse,
    /// A missing pair gets zero interaction energies: ideal for NRTL and Wilson (Λ = 1);
    /// for UNIQUAC τ = 1, which leaves the combinatorial (size and shape) term.
    Ideal,
}

/// NRTL parameters of one pair (i, j): τ_ij = a_ij + b_ij/T, α_ij = α_ji = alpha.
#[derive(Debug, Clone, PartialEq, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct NrtlPair {
    /// Component i.
    pub i: String,
    /// Component j.
    pub j: String,
    /// a_ij, dimensionless.
    #[serde(default)]
    pub a_ij: f64,
    /// a_ji, dimensionless.
    #[serde(default)]
    pub a_ji: f64,
    /// b_ij, K.
    pub b_ij: f64,
    /// b_ji, K.
    pub b_ji: f64,
    /// α (dimensionless).
    pub alpha: f64,
    /// Lowest temperature of the fitted data, K.
    pub t_min: f64,
    /// Highest temperature of the fitted data, K.
    pub t_max: f64,
    /// Reference key and confidence note.
    pub source: String,
}

/// Wilson parameters of one pair (i, j): Λ_ij = (v_j/v_i) exp(−(a_ij + b_ij/T)).
#[derive(Debug, Clone, PartialEq, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct WilsonPair {
    /// Component i.
    pub i: String,
    /// Component j.
    pub j: String,
    /// a_ij, dimensionless.
    #[serde(default)]
    pub a_ij: f64,
    /// a_ji, dimensionless.
    #[serde(default)]
    pub a_ji: f64,
    /// b_ij, K.
    pub b_ij: f64,
    /// b_ji, K.
    pub b_ji: f64,
    /// Liquid molar volume of i the parameters were fitted with, m3/mol.
    pub v_i: f64,
    /// Liquid molar volume of j, m3/mol.
    pub v_j: f64,
    /// Lowest temperature of the fitted data, K.
    pub t_min: f64,
    /// Highest temperature of the fitted data, K.
    pub t_max: f64,
    /// Reference key and confidence note.
    pub source: String,
}

/// UNIQUAC parameters of one pair (i, j): τ_ij = exp(a_ij + b_ij/T).
#[derive(Debug, Clone, PartialEq, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct UniquacPair {
    /// Component i.
    pub i: String,
    /// Component j.
    pub j: String,
    /// a_ij, dimensionless.
    #[serde(default)]
    pub a_ij: f64,
    /// a_ji, dimensionless.
    #[serde(default)]
    pub a_ji: f64,
    /// b_ij, K.
    pub b_ij: f64,
    /// b_ji, K.
    pub b_ji: f64,
    /// Lowest temperature of the fitted data, K.
    pub t_min: f64,
    /// Highest temperature of the fitted data, K.
    pub t_max: f64,
    /// Reference key and confidence note.
    pub source: String,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct Reference {
    #[allow(dead_code)]
    citation: String,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct File {
    references: BTreeMap<String, Reference>,
    #[serde(default)]
    nrtl: Vec<NrtlPair>,
    #[serde(default)]
    wilson: Vec<WilsonPair>,
    #[serde(default)]
    uniquac: Vec<UniquacPair>,
}

/// A table of published binary parameters for NRTL, Wilson and UNIQUAC, each entry with its
/// source and temperature range. [`ActivityPairs::embedded`] is compiled from
/// `core/data/activity_pairs.toml`.
#[derive(Debug, Clone, PartialEq)]
pub struct ActivityPairs {
    /// NRTL pairs.
    pub nrtl: Vec<NrtlPair>,
    /// Wilson pairs.
    pub wilson: Vec<WilsonPair>,
    /// UNIQUAC pairs.
    pub uniquac: Vec<UniquacPair>,
}

fn same(a: &str, b: &str) -> bool {
    a.trim().eq_ignore_ascii_case(b.trim())
}

/// Finds the entry for (i, j) in either order; returns it and whether it is reversed.
fn find<'a, T>(list: &'a [T], key: impl Fn(&T) -> (&str, &str), i: &str, j: &str) -> Option<(&'a T, bool)> {
    list.iter().find_map(|p| {
        let (a, b) = key(p);
        if same(a, i) && same(b, j) {
            Some((p, false))
        } else if same(a, j) && same(b, i) {
            Some((p, true))
        } else {
            None
        }
    })
}

impl ActivityPairs {
    /// The table compiled into the library (parsed once, then shared).
    pub fn embedded() -> &'static ActivityPairs {
        static TABLE: OnceLock<ActivityPairs> = OnceLock::new();
        TABLE.get_or_init(|| {
            // The embedded file is checked by the test suite; a failure here is a build defect.
            ActivityPairs::from_toml_str(EMBEDDED).unwrap_or_else(|e| panic!("the embedded pair table is invalid: {e}"))
        })
    }

    /// Parses and checks a table of the embedded schema: every value finite, ranges valid,
    /// volumes > 0, every `source` starting with a key of `[references]`, no pair twice.
    pub fn from_toml_str(text: &str) -> Result<ActivityPairs> {
        let f: File = toml::from_str(text).map_err(|e| Error::Data(format!("activity pair table: {e}")))?;
        let data = |s: String| Error::Data(format!("activity pair table: {s}"));
        let check = |model: &str, i: &str, j: &str, vals: &[f64], t: (f64, f64), source: &str| -> Result<()> {
            let key = source.split_whitespace().next().unwrap_or("");
            if !f.references.contains_key(key) {
                return Err(data(format!(
                    "{model} {i}–{j}: source '{source}' does not start with a reference key"
                )));
            }
            if vals.iter().any(|v| !v.is_finite()) || same(i, j) {
                return Err(data(format!(
                    "{model} {i}–{j}: non-finite value or a pair of one component"
                )));
            }
            super::check_range(t.0, t.1).map_err(|e| Error::Data(format!("{model} {i}–{j}: {}", e.message())))
        };
        for (k, p) in f.nrtl.iter().enumerate() {
            check(
                "NRTL",
                &p.i,
                &p.j,
                &[p.a_ij, p.a_ji, p.b_ij, p.b_ji, p.alpha],
                (p.t_min, p.t_max),
                &p.source,
            )?;
            if find(&f.nrtl[..k], |q| (&q.i, &q.j), &p.i, &p.j).is_some() {
                return Err(data(format!("NRTL {}–{} is listed twice", p.i, p.j)));
            }
        }
        for (k, p) in f.wilson.iter().enumerate() {
            check(
                "Wilson",
                &p.i,
                &p.j,
                &[p.a_ij, p.a_ji, p.b_ij, p.b_ji],
                (p.t_min, p.t_max),
                &p.source,
            )?;
            if !(p.v_i > 0.0) || !(p.v_j > 0.0) || !p.v_i.is_finite() || !p.v_j.is_finite() {
                return Err(data(format!(
                    "Wilson {}–{}: volumes must be finite and > 0 m3/mol",
                    p.i, p.j
                )));
            }
            if find(&f.wilson[..k], |q| (&q.i, &q.j), &p.i, &p.j).is_some() {
                return Err(data(format!("Wilson {}–{} is listed twice", p.i, p.j)));
            }
        }
        for (k, p) in f.uniquac.iter().enumerate() {
            check(
                "UNIQUAC",
                &p.i,
                &p.j,
                &[p.a_ij, p.a_ji, p.b_ij, p.b_ji],
                (p.t_min, p.t_max),
                &p.source,
            )?;
            if find(&f.uniquac[..k], |q| (&q.i, &q.j), &p.i, &p.j).is_some() {
                return Err(data(format!("UNIQUAC {}–{} is listed twice", p.i, p.j)));
            }
        }
        Ok(ActivityPairs {
            nrtl: f.nrtl,
            wilson: f.wilson,
            uniquac: f.uniquac,
        })
    }

    /// The NRTL entry of (i, j) in either order, with a flag saying it is stored as (j, i).
    pub fn nrtl_pair(&self, i: &str, j: &str) -> Option<(&NrtlPair, bool)> {
        find(&self.nrtl, |q| (&q.i, &q.j), i, j)
    }

    /// The Wilson entry of (i, j) in either order, with a flag saying it is stored as (j, i).
    pub fn wilson_pair(&self, i: &str, j: &str) -> Option<(&WilsonPair, bool)> {
        find(&self.wilson, |q| (&q.i, &q.j), i, j)
    }

    /// The UNIQUAC entry of (i, j) in either order, with a flag saying it is stored as (j, i).
    pub fn uniquac_pair(&self, i: &str, j: &str) -> Option<(&UniquacPair, bool)> {
        find(&self.uniquac, |q| (&q.i, &q.j), i, j)
    }
}

/// Walks the pairs of `names`: calls `found` for each pair the table has (with the
/// intersection of temperature ranges tracked), and collects the missing ones.
fn assemble<'a, T: 'a>(
    model: &str,
    names: &[&str],
    missing: MissingPairs,
    lookup: impl Fn(&str, &str) -> Option<(&'a T, bool)>,
    range_of: impl Fn(&T) -> (f64, f64),
    mut found: impl FnMut(usize, usize, &T, bool),
) -> Result<(f64, f64)> {
    let mut range = (0.0f64, f64::INFINITY);
    let mut absent = Vec::new();
    for a in 0..names.len() {
        for b in a + 1..names.len() {
            match lookup(names[a], names[b]) {
                Some((p, rev)) => {
                    let (lo, hi) = range_of(p);
                    range = (range.0.max(lo), range.1.min(hi));
                    found(a, b, p, rev);
                }
                None => absent.push(format!("{}–{}", names[a], names[b])),
            }
        }
    }
    if !absent.is_empty() && missing == MissingPairs::Refuse {
        return Err(Error::invalid(
            format!("{model} binary parameters"),
            format!(
                "none in the table for {}; give them, or ask for MissingPairs::Ideal to treat those pairs as ideal",
                absent.join(", ")
            ),
        ));
    }
    if range.1 == f64::INFINITY {
        // No pair found at all (every pair ideal by request): any liquid temperature.
        range = (1.0, 1.0e4);
    }
    if !(range.0 < range.1) {
        return Err(Error::invalid(
            format!("{model} binary parameters"),
            format!(
                "the pairs' temperature ranges do not overlap (latest start {} K, earliest end {} K)",
                num(range.0),
                num(range.1)
            ),
        ));
    }
    Ok(range)
}

fn owned(names: &[&str]) -> Vec<String> {
    names.iter().map(|s| s.to_string()).collect()
}

impl Nrtl {
    /// An NRTL model of `names` from the pairs of `table` (e.g. [`ActivityPairs::embedded`]),
    /// valid over the intersection of the pairs' temperature ranges. A pair the table lacks
    /// is [`Error::InvalidInput`] naming it, unless `missing` is [`MissingPairs::Ideal`]
    /// (τ = 0 for that pair).
    pub fn from_pairs(names: &[&str], table: &ActivityPairs, missing: MissingPairs) -> Result<Nrtl> {
        let nc = names.len();
        let mut a = vec![vec![0.0; nc]; nc];
        let mut b = vec![vec![0.0; nc]; nc];
        let mut c = vec![vec![0.3; nc]; nc];
        let range = assemble(
            "NRTL",
            names,
            missing,
            |i, j| table.nrtl_pair(i, j),
            |p| (p.t_min, p.t_max),
            |i, j, p, rev| {
                let (aij, aji, bij, bji) = if rev {
                    (p.a_ji, p.a_ij, p.b_ji, p.b_ij)
                } else {
                    (p.a_ij, p.a_ji, p.b_ij, p.b_ji)
                };
                a[i][j] = aij;
                a[j][i] = aji;
                b[i][j] = bij;
                b[j][i] = bji;
                c[i][j] = p.alpha;
                c[j][i] = p.alpha;
            },
        )?;
        Nrtl::new(NrtlParams {
            components: owned(names),
            a,
            b,
            c,
            d: vec![],
            e: vec![],
            f: vec![],
            t_min: range.0,
            t_max: range.1,
        })
    }
}

impl Wilson {
    /// A Wilson model of `names` from the pairs of `table`, with the molar volumes (m3/mol)
    /// the pairs were fitted with (a component in several pairs must have the same volume in
    /// each, or it is [`Error::Data`]). Missing pairs as in [`Nrtl::from_pairs`]; an ideal
    /// pair gets Λ_ij = 1. A component that appears in no pair needs `volumes` (m3/mol, one per
    /// component, used where the table has none); `None` then is [`Error::InvalidInput`].
    pub fn from_pairs(
        names: &[&str],
        table: &ActivityPairs,
        missing: MissingPairs,
        volumes: Option<&[f64]>,
    ) -> Result<Wilson> {
        let nc = names.len();
        let mut v: Vec<Option<f64>> = vec![None; nc];
        let mut b = vec![vec![0.0; nc]; nc];
        let mut a = vec![vec![0.0; nc]; nc];
        let mut clash = None;
        let range = assemble(
            "Wilson",
            names,
            missing,
            |i, j| table.wilson_pair(i, j),
            |p| (p.t_min, p.t_max),
            |i, j, p, rev| {
                let (aij, aji, bij, bji, vi, vj) = if rev {
                    (p.a_ji, p.a_ij, p.b_ji, p.b_ij, p.v_j, p.v_i)
                } else {
                    (p.a_ij, p.a_ji, p.b_ij, p.b_ji, p.v_i, p.v_j)
                };
                a[i][j] = aij;
                a[j][i] = aji;
                b[i][j] = bij;
                b[j][i] = bji;
                for (k, vk) in [(i, vi), (j, vj)] {
                    match v[k] {
                        Some(old) if (old - vk).abs() > 1e-9 * vk => clash = Some(k),
                        _ => v[k] = Some(vk),
                    }
                }
            },
        )?;
        if let Some(k) = clash {
            return Err(Error::Data(format!(
                "Wilson pairs give different molar volumes for '{}'",
                names[k]
            )));
        }
        let mut vols = Vec::with_capacity(nc);
        for k in 0..nc {
            match (v[k], volumes) {
                (Some(x), _) => vols.push(x),
                (None, Some(given)) if given.len() == nc => vols.push(given[k]),
                _ => {
                    return Err(Error::invalid(
                        "Wilson molar volumes",
                        format!(
                            "'{}' is in no pair of the table; give the molar volumes (m3/mol, one per component)",
                            names[k]
                        ),
                    ));
                }
            }
        }
        // Ideal pairs: a_ij = ln(V_j/V_i) makes Λ_ij = 1.
        for i in 0..nc {
            for j in 0..nc {
                if i != j && table.wilson_pair(names[i], names[j]).is_none() {
                    a[i][j] = (vols[j] / vols[i]).ln();
                }
            }
        }
        Wilson::new(WilsonParams {
            components: owned(names),
            volumes: vols,
            a,
            b,
            c: vec![],
            d: vec![],
            t_min: range.0,
            t_max: range.1,
        })
    }
}

impl Uniquac {
    /// A UNIQUAC model of `names` from the pairs of `table`. `r_q` gives (r_i, q_i) per
    /// component; `None` takes them from the UNIFAC group sums of the embedded group table
    /// (Bondi's increments; a molecule the table does not decompose is
    /// [`Error::UnknownComponent`]). Missing pairs as in [`Nrtl::from_pairs`] (ideal: τ = 1).
    pub fn from_pairs(
        names: &[&str],
        table: &ActivityPairs,
        missing: MissingPairs,
        r_q: Option<&[(f64, f64)]>,
    ) -> Result<Uniquac> {
        let nc = names.len();
        let (r, q): (Vec<f64>, Vec<f64>) = match r_q {
            Some(v) => {
                if v.len() != nc {
                    return Err(Error::invalid(
                        "UNIQUAC r, q",
                        format!("{} pairs given for {nc} components", v.len()),
                    ));
                }
                v.iter().copied().unzip()
            }
            None => {
                let g = UnifacTable::embedded();
                let mut r = Vec::with_capacity(nc);
                let mut q = Vec::with_capacity(nc);
                for n in names {
                    let groups: Vec<(&str, u32)> = g.molecule(n)?.iter().map(|(s, c)| (s.as_str(), *c)).collect();
                    let (ri, qi) = g.r_q(&groups)?;
                    r.push(ri);
                    q.push(qi);
                }
                (r, q)
            }
        };
        let mut a = vec![vec![0.0; nc]; nc];
        let mut b = vec![vec![0.0; nc]; nc];
        let range = assemble(
            "UNIQUAC",
            names,
            missing,
            |i, j| table.uniquac_pair(i, j),
            |p| (p.t_min, p.t_max),
            |i, j, p, rev| {
                let (aij, aji, bij, bji) = if rev {
                    (p.a_ji, p.a_ij, p.b_ji, p.b_ij)
                } else {
                    (p.a_ij, p.a_ji, p.b_ij, p.b_ji)
                };
                a[i][j] = aij;
                a[j][i] = aji;
                b[i][j] = bij;
                b[j][i] = bji;
            },
        )?;
        Uniquac::new(UniquacParams {
            components: owned(names),
            r,
            q,
            q_prime: vec![],
            a,
            b,
            c: vec![],
            d: vec![],
            t_min: range.0,
            t_max: range.1,
        })
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::error::ErrorKind;
    use crate::model::{ExcessDerivs, ExcessGibbs, Need};

    #[test]
    fn embedded_pairs_read() {
        let t = ActivityPairs::embedded();
        assert!(t.nrtl.len() >= 3 && !t.wilson.is_empty());
        let (p, rev) = t.nrtl_pair("Water", "methanol").unwrap();
        assert!(rev);
        assert_eq!(p.alpha, 0.241);
    }

    #[test]
    fn missing_pairs_are_named_unless_ideal_is_asked_for() {
        let t = ActivityPairs::embedded();
        let e = Nrtl::from_pairs(&["methanol", "water", "benzene"], t, MissingPairs::Refuse).unwrap_err();
        assert_eq!(e.kind(), ErrorKind::InvalidInput);
        assert!(
            e.to_string().contains("methanol–benzene") && e.to_string().contains("water–benzene"),
            "{e}"
        );
        let m = Nrtl::from_pairs(&["methanol", "water", "benzene"], t, MissingPairs::Ideal).unwrap();
        assert_eq!(m.temperature_range(), (337.0, 373.2));
        let (tau, _) = m.tau_alpha(350.0, 0, 2);
        assert_eq!(tau, 0.0);
        // Order of the names does not matter: (water, methanol) reads the pair reversed.
        let a = Nrtl::from_pairs(&["methanol", "water"], t, MissingPairs::Refuse).unwrap();
        let b = Nrtl::from_pairs(&["water", "methanol"], t, MissingPairs::Refuse).unwrap();
        let (mut oa, mut ob) = (ExcessDerivs::new(2), ExcessDerivs::new(2));
        a.excess(350.0, &[0.3, 0.7], Need::VALUES, &mut oa).unwrap();
        b.excess(350.0, &[0.7, 0.3], Need::VALUES, &mut ob).unwrap();
        assert!((oa.ln_gamma[0] - ob.ln_gamma[1]).abs() < 1e-15);
        // Disjoint ranges: methanol–water (337–373 K) and water–1-butanol (293–303 K).
        let e = Nrtl::from_pairs(&["methanol", "water", "1-butanol"], t, MissingPairs::Ideal).unwrap_err();
        assert!(e.to_string().contains("do not overlap"), "{e}");
        let e = Wilson::from_pairs(&["methanol", "benzene"], t, MissingPairs::Ideal, None).unwrap_err();
        assert!(e.to_string().contains("give the molar volumes"), "{e}");
        let w = Wilson::from_pairs(
            &["methanol", "benzene"],
            t,
            MissingPairs::Ideal,
            Some(&[4.0e-5, 8.9e-5]),
        )
        .unwrap();
        assert!((w.lambda(300.0, 0, 1) - 1.0).abs() < 1e-15);
        let u = Uniquac::from_pairs(&["ethanol", "water"], t, MissingPairs::Ideal, None).unwrap();
        assert_eq!(u.params().r, vec![0.9011 + 0.6744 + 1.0, 0.92]);
        assert!(Uniquac::from_pairs(&["ethanol", "water"], t, MissingPairs::Refuse, None).is_err());
    }
}
