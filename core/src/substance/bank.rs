//! The component data bank: parsing, validation and look-up.

use super::{Component, SOURCED_FIELDS};
use crate::error::{Error, Result};
use serde::{Deserialize, Serialize};
use std::collections::{BTreeMap, HashMap};
use std::sync::OnceLock;

/// The embedded data file, compiled into the library.
const EMBEDDED: &str = include_str!("../../data/components.toml");

/// A published source that component values cite by key.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Reference {
    /// Full citation: authors, title, edition, table.
    pub citation: String,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct BankFile {
    #[serde(default)]
    references: BTreeMap<String, Reference>,
    #[serde(default)]
    component: Vec<Component>,
}

/// A set of components with their references, searchable by name, alias or CAS number.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct DataBank {
    references: BTreeMap<String, Reference>,
    components: Vec<Component>,
    #[serde(skip)]
    index: HashMap<String, usize>,
}

fn normalise(key: &str) -> String {
    key.trim().to_lowercase()
}

impl DataBank {
    /// The data bank compiled into the library (parsed once, then shared).
    pub fn embedded() -> &'static DataBank {
        static BANK: OnceLock<DataBank> = OnceLock::new();
        BANK.get_or_init(|| {
            // The embedded file is checked by the test suite; a failure here is a build defect.
            DataBank::from_toml_str(EMBEDDED).unwrap_or_else(|e| panic!("the embedded component file is invalid: {e}"))
        })
    }

    /// Parses and validates a data file of the embedded schema (TOML).
    ///
    /// Every component must be valid ([`Component::validate`]), every sourced field must name
    /// a reference key present in the file's `[references]` table, and no name, alias or CAS
    /// number may be used twice.
    pub fn from_toml_str(text: &str) -> Result<DataBank> {
        let file: BankFile = toml::from_str(text).map_err(|e| Error::Data(format!("component file: {e}")))?;
        let mut bank = DataBank {
            references: file.references,
            components: Vec::new(),
            index: HashMap::new(),
        };
        for c in file.component {
            bank.add(c)?;
        }
        Ok(bank)
    }

    /// An empty bank with the given references, to which components can be added in code.
    pub fn with_references(references: BTreeMap<String, Reference>) -> DataBank {
        DataBank {
            references,
            components: Vec::new(),
            index: HashMap::new(),
        }
    }

    /// Adds a component after validating it and its sources; names, aliases and CAS numbers
    /// must not collide with those already present.
    pub fn add(&mut self, c: Component) -> Result<()> {
        c.validate()?;
        for field in SOURCED_FIELDS.iter().copied().chain(c.tb.is_some().then_some("tb")) {
            let src = c
                .sources
                .get(field)
                .ok_or_else(|| Error::Data(format!("component '{}': no source given for '{field}'", c.name)))?;
            let key = src.split_whitespace().next().unwrap_or("");
            if !self.references.contains_key(key) {
                return Err(Error::Data(format!(
                    "component '{}': source '{key}' of '{field}' is not in [references]",
                    c.name
                )));
            }
        }
        let id = self.components.len();
        let keys: Vec<String> = std::iter::once(&c.name)
            .chain(c.aliases.iter())
            .chain(std::iter::once(&c.cas))
            .map(|k| normalise(k))
            .collect();
        for k in &keys {
            if let Some(&other) = self.index.get(k) {
                return Err(Error::Data(format!(
                    "'{k}' names both '{}' and '{}'",
                    self.components[other].name, c.name
                )));
            }
        }
        for k in keys {
            self.index.insert(k, id);
        }
        self.components.push(c);
        Ok(())
    }

    fn rebuild_index(&mut self) {
        self.index.clear();
        for (id, c) in self.components.iter().enumerate() {
            for k in std::iter::once(&c.name)
                .chain(c.aliases.iter())
                .chain(std::iter::once(&c.cas))
            {
                self.index.insert(normalise(k), id);
            }
        }
    }

    /// All components, in file order.
    pub fn components(&self) -> &[Component] {
        &self.components
    }

    /// The references table.
    pub fn references(&self) -> &BTreeMap<String, Reference> {
        &self.references
    }

    /// Looks a component up by name, alias or CAS number (case-insensitive). An unknown key
    /// gives [`Error::UnknownComponent`] with the closest known names.
    pub fn get(&self, key: &str) -> Result<&Component> {
        if self.index.is_empty() && !self.components.is_empty() {
            // A bank restored by deserialisation has no index yet.
            let mut me = self.clone();
            me.rebuild_index();
            return me
                .index
                .get(&normalise(key))
                .map(|&i| &self.components[i])
                .ok_or_else(|| self.unknown(key));
        }
        self.index
            .get(&normalise(key))
            .map(|&i| &self.components[i])
            .ok_or_else(|| self.unknown(key))
    }

    /// Looks several components up at once, in order.
    pub fn get_many<S: AsRef<str>>(&self, keys: &[S]) -> Result<Vec<Component>> {
        keys.iter().map(|k| self.get(k.as_ref()).cloned()).collect()
    }

    fn unknown(&self, key: &str) -> Error {
        let k = normalise(key);
        let mut scored: Vec<(usize, &str)> = self
            .components
            .iter()
            .flat_map(|c| {
                std::iter::once(c.name.as_str())
                    .chain(c.aliases.iter().map(|a| a.as_str()))
                    .map(move |name| (name, c.name.as_str()))
            })
            .map(|(alias, canon)| (edit_distance(&k, &normalise(alias)), canon))
            .collect();
        scored.sort();
        let mut out: Vec<String> = Vec::new();
        for (d, name) in scored {
            if out.len() == 3 || d > k.len().max(3) {
                break;
            }
            if !out.iter().any(|o| o == name) {
                out.push(name.to_string());
            }
        }
        Error::UnknownComponent {
            name: key.to_string(),
            suggestions: out,
        }
    }
}

/// Levenshtein distance between two strings (by characters).
fn edit_distance(a: &str, b: &str) -> usize {
    let a: Vec<char> = a.chars().collect();
    let b: Vec<char> = b.chars().collect();
    let mut prev: Vec<usize> = (0..=b.len()).collect();
    let mut cur = vec![0; b.len() + 1];
    for i in 1..=a.len() {
        cur[0] = i;
        for j in 1..=b.len() {
            let cost = usize::from(a[i - 1] != b[j - 1]);
            cur[j] = (prev[j] + 1).min(cur[j - 1] + 1).min(prev[j - 1] + cost);
        }
        std::mem::swap(&mut prev, &mut cur);
    }
    prev[b.len()]
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn embedded_bank_loads_and_looks_up() {
        let bank = DataBank::embedded();
        let m = bank.get("METHANE").unwrap();
        assert_eq!(m.cas, "74-82-8");
        assert_eq!(bank.get("74-82-8").unwrap().name, m.name);
        assert_eq!(bank.get("ch4").unwrap().name, m.name);
    }

    #[test]
    fn unknown_name_suggests_close_ones() {
        let e = DataBank::embedded().get("methan").unwrap_err();
        match e {
            Error::UnknownComponent { suggestions, .. } => {
                assert_eq!(suggestions.first().map(String::as_str), Some("methane"))
            }
            other => panic!("wrong error {other}"),
        }
    }

    #[test]
    fn edit_distance_basic() {
        assert_eq!(edit_distance("kitten", "sitting"), 3);
        assert_eq!(edit_distance("", "abc"), 3);
    }
}
