//! Species with formation data for chemical (reaction) equilibrium: ideal gases and pure
//! condensed species (graphite, liquid water ...), each with a multi-range heat-capacity
//! correlation and its validity range.
//!
//! The embedded species file (`core/data/species.toml`, [`SpeciesBank::embedded`]) holds the
//! combustion and synthesis species (H2, O2, N2, Ar, H2O, CO, CO2, CH4, NH3, CH3OH, NO, NO2,
//! OH, H, O, N, graphite, liquid water); every value names its source. Each range carries the
//! heat-capacity part of the NASA 7-coefficient polynomial form (McBride, Gordon & Reno 1993,
//! NASA TM-4513): cp/R = a1 + a2 T + a3 T² + a4 T³ + a5 T⁴, T in K.
//!
//! Reference state: as for the components (the `ideal_gas` module of this crate), each species at 298.15 K and
//! 1e5 Pa in its own phase has h = ΔfH° and g = ΔfG°; h and s at other temperatures integrate
//! cp across the ranges, so they are continuous at every range boundary.

use super::{Component, R, T_REFERENCE};
use crate::error::{Error, Result};
use serde::{Deserialize, Serialize};
use std::collections::{BTreeMap, HashMap};
use std::sync::OnceLock;

const EMBEDDED: &str = include_str!("../../data/species.toml");

/// The phase a species is in.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum SpeciesPhase {
    /// An ideal-gas species (a member of the gas mixture).
    Gas,
    /// A pure condensed species (solid or liquid), a phase of its own.
    Condensed,
}

/// One temperature range of a heat-capacity correlation: cp/R = a1 + a2 T + a3 T² + a4 T³ +
/// a5 T⁴ (T in K) on [t_min, t_max] K.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct CpRange {
    /// Lowest temperature of the range, K.
    pub t_min: f64,
    /// Highest temperature of the range, K.
    pub t_max: f64,
    /// Coefficients a1..a5 of cp/R (units K⁻ⁱ for aᵢ₊₁).
    pub a: [f64; 5],
}

impl CpRange {
    fn cp(&self, t: f64) -> f64 {
        let a = &self.a;
        a[0] + t * (a[1] + t * (a[2] + t * (a[3] + t * a[4])))
    }
    fn dcp(&self, t: f64) -> f64 {
        let a = &self.a;
        a[1] + t * (2.0 * a[2] + t * (3.0 * a[3] + t * 4.0 * a[4]))
    }
    /// ∫ cp/R dT (an antiderivative), K.
    fn h(&self, t: f64) -> f64 {
        let a = &self.a;
        t * (a[0] + t * (a[1] / 2.0 + t * (a[2] / 3.0 + t * (a[3] / 4.0 + t * a[4] / 5.0))))
    }
    /// ∫ cp/(R T) dT (an antiderivative), dimensionless.
    fn s(&self, t: f64) -> f64 {
        let a = &self.a;
        a[0] * t.ln() + t * (a[1] + t * (a[2] / 2.0 + t * (a[3] / 3.0 + t * a[4] / 4.0)))
    }
}

/// Standard-state molar properties of one species at T and p° = 1e5 Pa, in the library's
/// reference state.
#[derive(Debug, Clone, Copy, PartialEq, Default, Serialize, Deserialize)]
pub struct StandardState {
    /// Molar enthalpy, J/mol.
    pub h: f64,
    /// Molar entropy at 1e5 Pa, J/(mol K).
    pub s: f64,
    /// Molar Gibbs energy h − T s, J/mol.
    pub g: f64,
    /// Molar isobaric heat capacity, J/(mol K).
    pub cp: f64,
    /// d cp/dT, J/(mol K²).
    pub dcp: f64,
}

/// One species with its elements, formation data and heat capacity, each with its source.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Species {
    /// Canonical name (lower case, e.g. "carbon monoxide", "graphite").
    pub name: String,
    /// Other names it can be looked up by (formula, common names).
    #[serde(default)]
    pub aliases: Vec<String>,
    /// Molecular formula, e.g. "CO".
    pub formula: String,
    /// Gas (a member of the gas mixture) or pure condensed phase.
    pub phase: SpeciesPhase,
    /// Elemental composition, atoms per molecule, keyed by element symbol.
    pub elements: BTreeMap<String, f64>,
    /// Standard enthalpy of formation at 298.15 K and 1e5 Pa in the species' phase, J/mol.
    pub hf298: f64,
    /// Standard Gibbs energy of formation at 298.15 K and 1e5 Pa in the species' phase, J/mol.
    pub gf298: f64,
    /// Molar volume of a condensed species, m3/mol (taken as constant; `None` for gases and
    /// for condensed species whose pressure dependence is neglected).
    #[serde(default)]
    pub molar_volume: Option<f64>,
    /// Heat-capacity ranges, contiguous and in increasing temperature; their union must
    /// include 298.15 K.
    pub cp: Vec<CpRange>,
    /// The reference key (and confidence note) for each value, keyed by field name
    /// (hf298, gf298, cp, and molar_volume when given).
    #[serde(default)]
    pub sources: BTreeMap<String, String>,
}

impl Species {
    /// Checks that the data are finite, the ranges contiguous and 298.15 K inside them.
    pub fn validate(&self) -> Result<()> {
        let bad = |m: String| Err(Error::Data(format!("species '{}': {m}", self.name)));
        if self.name.trim().is_empty() {
            return Err(Error::Data("species with an empty name".into()));
        }
        if !(self.hf298.is_finite() && self.gf298.is_finite()) {
            return bad("hf298 and gf298 must be finite".into());
        }
        if self.elements.is_empty() || self.elements.values().any(|&v| !(v.is_finite() && v >= 0.0)) {
            return bad("elements must be non-empty with finite counts >= 0".into());
        }
        if self.elements.values().all(|&v| v == 0.0) {
            return bad("at least one element count must be > 0".into());
        }
        if let Some(v) = self.molar_volume
            && !(v.is_finite() && v > 0.0)
        {
            return bad(format!("molar_volume = {v} must be finite and > 0"));
        }
        if self.phase == SpeciesPhase::Gas && self.molar_volume.is_some() {
            return bad("molar_volume is for condensed species only".into());
        }
        if self.cp.is_empty() {
            return bad("no cp range".into());
        }
        for (i, r) in self.cp.iter().enumerate() {
            if !(r.t_min.is_finite() && r.t_max.is_finite() && r.t_min > 0.0 && r.t_max > r.t_min)
                || r.a.iter().any(|c| !c.is_finite())
            {
                return bad(format!("cp range {i} is empty or has non-finite values"));
            }
            if i > 0 && r.t_min != self.cp[i - 1].t_max {
                return bad(format!(
                    "cp range {i} starts at {} K but the previous one ends at {} K",
                    r.t_min,
                    self.cp[i - 1].t_max
                ));
            }
        }
        let (lo, hi) = self.t_range();
        if !(lo <= T_REFERENCE && T_REFERENCE <= hi) {
            return bad(format!("cp ranges [{lo}, {hi}] K must include 298.15 K"));
        }
        Ok(())
    }

    /// The temperature range (K) over which the heat capacity, and so every energy, is valid.
    pub fn t_range(&self) -> (f64, f64) {
        (self.cp[0].t_min, self.cp[self.cp.len() - 1].t_max)
    }

    /// Standard entropy of formation at 298.15 K, (ΔfH° − ΔfG°)/298.15 K, J/(mol K): the
    /// species' entropy relative to its elements in their standard states.
    pub fn sf298(&self) -> f64 {
        (self.hf298 - self.gf298) / T_REFERENCE
    }

    fn range_index(&self, t: f64) -> usize {
        self.cp.iter().position(|r| t <= r.t_max).unwrap_or(self.cp.len() - 1)
    }

    /// Standard-state h, s, g, cp at T (K) and 1e5 Pa. Outside the cp ranges this is an
    /// [`Error::OutsideValidity`], never an extrapolation.
    pub fn standard(&self, t: f64) -> Result<StandardState> {
        let (lo, hi) = self.t_range();
        if !(t >= lo && t <= hi) {
            return Err(Error::OutsideValidity {
                what: "temperature".into(),
                value: t,
                min: lo,
                max: hi,
                detail: format!("heat-capacity ranges of species '{}'", self.name),
            });
        }
        let i0 = self.range_index(T_REFERENCE);
        let i1 = self.range_index(t);
        // ∫ from 298.15 K to T, piecewise over the ranges.
        let (mut ih, mut is) = (0.0, 0.0);
        if i1 >= i0 {
            let mut from = T_REFERENCE;
            for i in i0..=i1 {
                let r = &self.cp[i];
                let to = if i == i1 { t } else { r.t_max };
                ih += r.h(to) - r.h(from);
                is += r.s(to) - r.s(from);
                from = to;
            }
        } else {
            let mut from = T_REFERENCE;
            for i in (i1..=i0).rev() {
                let r = &self.cp[i];
                let to = if i == i1 { t } else { r.t_min };
                ih += r.h(to) - r.h(from);
                is += r.s(to) - r.s(from);
                from = to;
            }
        }
        let r = &self.cp[i1];
        let h = self.hf298 + R * ih;
        let s = self.sf298() + R * is;
        Ok(StandardState {
            h,
            s,
            g: h - t * s,
            cp: R * r.cp(t),
            dcp: R * r.dcp(t),
        })
    }

    /// An ideal-gas species from a data-bank component (its single `poly4` cp range,
    /// valid as the component's correlation states).
    pub fn from_component(c: &Component) -> Species {
        let a = &c.cp.coefficients;
        let mut sources = BTreeMap::new();
        for f in ["hf298", "gf298", "cp"] {
            if let Some(s) = c.sources.get(f) {
                sources.insert(f.to_string(), s.clone());
            }
        }
        Species {
            name: c.name.clone(),
            aliases: c.aliases.clone(),
            formula: c.formula.clone(),
            phase: SpeciesPhase::Gas,
            elements: c.elements.clone(),
            hf298: c.hf298,
            gf298: c.gf298,
            molar_volume: None,
            cp: vec![CpRange {
                t_min: c.cp.t_min,
                t_max: c.cp.t_max,
                a: [a[0], a[1], a[2], a[3], a[4]],
            }],
            sources,
        }
    }

    /// Whether `key` is this species' name or one of its aliases (case-insensitive).
    pub fn is_named(&self, key: &str) -> bool {
        let k = key.trim().to_lowercase();
        self.name.to_lowercase() == k || self.aliases.iter().any(|a| a.to_lowercase() == k)
    }
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct SpeciesFile {
    #[serde(default)]
    references: BTreeMap<String, super::Reference>,
    #[serde(default)]
    species: Vec<Species>,
}

/// A set of species with their references, searchable by name or alias.
#[derive(Debug, Clone, PartialEq)]
pub struct SpeciesBank {
    references: BTreeMap<String, super::Reference>,
    species: Vec<Species>,
    index: HashMap<String, usize>,
}

impl SpeciesBank {
    /// The species file compiled into the library (parsed once, then shared).
    pub fn embedded() -> &'static SpeciesBank {
        static BANK: OnceLock<SpeciesBank> = OnceLock::new();
        BANK.get_or_init(|| {
            // The embedded file is checked by the test suite; a failure here is a build defect.
            SpeciesBank::from_toml_str(EMBEDDED).unwrap_or_else(|e| panic!("the embedded species file is invalid: {e}"))
        })
    }

    /// Parses and validates a species file of the embedded schema (TOML): every species
    /// valid ([`Species::validate`]), its hf298, gf298 and cp (and molar_volume, if given)
    /// citing a key of the file's `[references]`, no name or alias used twice.
    pub fn from_toml_str(text: &str) -> Result<SpeciesBank> {
        let file: SpeciesFile = toml::from_str(text).map_err(|e| Error::Data(format!("species file: {e}")))?;
        let mut bank = SpeciesBank {
            references: file.references,
            species: Vec::new(),
            index: HashMap::new(),
        };
        for s in file.species {
            bank.add(s)?;
        }
        Ok(bank)
    }

    /// Adds a species after validating it and its sources.
    pub fn add(&mut self, s: Species) -> Result<()> {
        s.validate()?;
        let fields = ["hf298", "gf298", "cp"]
            .into_iter()
            .chain(s.molar_volume.is_some().then_some("molar_volume"));
        for field in fields {
            let src = s
                .sources
                .get(field)
                .ok_or_else(|| Error::Data(format!("species '{}': no source given for '{field}'", s.name)))?;
            let key = src.split_whitespace().next().unwrap_or("");
            if !self.references.contains_key(key) {
                return Err(Error::Data(format!(
                    "species '{}': source '{key}' of '{field}' is not in [references]",
                    s.name
                )));
            }
        }
        let keys: Vec<String> = std::iter::once(&s.name)
            .chain(s.aliases.iter())
            .map(|k| k.trim().to_lowercase())
            .collect();
        for k in &keys {
            if let Some(&o) = self.index.get(k) {
                return Err(Error::Data(format!(
                    "'{k}' names both '{}' and '{}'",
                    self.species[o].name, s.name
                )));
            }
        }
        let id = self.species.len();
        for k in keys {
            self.index.insert(k, id);
        }
        self.species.push(s);
        Ok(())
    }

    /// All species, in file order.
    pub fn species(&self) -> &[Species] {
        &self.species
    }

    /// The references table.
    pub fn references(&self) -> &BTreeMap<String, super::Reference> {
        &self.references
    }

    /// Looks a species up by name or alias (case-insensitive); `None` if absent.
    pub fn find(&self, key: &str) -> Option<&Species> {
        self.index.get(&key.trim().to_lowercase()).map(|&i| &self.species[i])
    }

    /// Looks a species up by name or alias; if it is not in this bank, a gas-phase
    /// component of the embedded component bank ([`super::DataBank::embedded`]) of that name
    /// is taken ([`Species::from_component`]). An unknown name is
    /// [`Error::UnknownComponent`] with close names from both banks.
    pub fn get(&self, key: &str) -> Result<Species> {
        if let Some(s) = self.find(key) {
            return Ok(s.clone());
        }
        match super::DataBank::embedded().get(key) {
            Ok(c) => Ok(Species::from_component(c)),
            Err(Error::UnknownComponent { name, mut suggestions }) => {
                let k = key.trim().to_lowercase();
                let mut near: Vec<(usize, String)> = self
                    .species
                    .iter()
                    .flat_map(|s| {
                        std::iter::once(&s.name)
                            .chain(s.aliases.iter())
                            .map(move |a| (a, &s.name))
                    })
                    .map(|(a, n)| (edit(&k, &a.to_lowercase()), n.clone()))
                    .filter(|(d, _)| *d <= k.len().max(3) / 2 + 1)
                    .collect();
                near.sort();
                let mut out: Vec<String> = Vec::new();
                for (_, n) in near {
                    if !out.contains(&n) && out.len() < 3 {
                        out.push(n);
                    }
                }
                for s in suggestions.drain(..) {
                    if !out.contains(&s) && out.len() < 5 {
                        out.push(s);
                    }
                }
                Err(Error::UnknownComponent { name, suggestions: out })
            }
            Err(e) => Err(e),
        }
    }
}

fn edit(a: &str, b: &str) -> usize {
    let a: Vec<char> = a.chars().collect();
    let b: Vec<char> = b.chars().collect();
    let mut prev: Vec<usize> = (0..=b.len()).collect();
    let mut cur = vec![0; b.len() + 1];
    for i in 1..=a.len() {
        cur[0] = i;
        for j in 1..=b.len() {
            cur[j] = (prev[j] + 1)
                .min(cur[j - 1] + 1)
                .min(prev[j - 1] + usize::from(a[i - 1] != b[j - 1]));
        }
        std::mem::swap(&mut prev, &mut cur);
    }
    prev[b.len()]
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn embedded_species_load_and_are_continuous() {
        let bank = SpeciesBank::embedded();
        assert!(bank.species().len() >= 18);
        for s in bank.species() {
            // h and s continuous at range boundaries by construction; cp jumps by < 0.5 %.
            for w in s.cp.windows(2) {
                let t = w[0].t_max;
                let (c0, c1) = (w[0].cp(t), w[1].cp(t));
                assert!(
                    (c0 - c1).abs() / c0 < 5e-3,
                    "{}: cp jump at {t} K: {c0} vs {c1}",
                    s.name
                );
            }
            let st = s.standard(T_REFERENCE).unwrap();
            assert!(
                (st.h - s.hf298).abs() < 1e-9 && (st.g - s.gf298).abs() < 1e-6,
                "{}",
                s.name
            );
        }
        assert!(bank.find("C(gr)").is_some());
        assert_eq!(bank.get("ethane").unwrap().phase, SpeciesPhase::Gas);
        match bank.get("hydroxil").unwrap_err() {
            Error::UnknownComponent { suggestions, .. } => assert!(suggestions.contains(&"hydroxyl".to_string())),
            e => panic!("{e}"),
        }
        let e = bank.get("graphite").unwrap().standard(3500.0).unwrap_err();
        assert_eq!(e.kind(), crate::ErrorKind::OutsideValidity);
    }
}
