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
}

/// A set of components with their references, searchable by name, alias or CAS number.
/// Serialises as `{"references": {...}, "components": [...]}` and is re-validated (and
/// re-indexed) when deserialised.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(try_from = "BankRepr", into = "BankRepr")]
pub struct DataBank {
    references: BTreeMap<String, Reference>,
    components: Vec<Component>,
    index: HashMap<String, usize>,
}

#[derive(Serialize, Deserialize)]
struct BankRepr {
    references: BTreeMap<String, Reference>,
    components: Vec<Component>,
}

impl TryFrom<BankRepr> for DataBank {
    type Error = Error;
    fn try_from(r: BankRepr) -> Result<Self> {
        let mut bank = DataBank::with_references(r.references);
        for c in r.components {
            bank.add(c)?;
        }
        Ok(bank)
    }
}

impl From<DataBank> for BankRepr {
    fn from(b: DataBank) -> Self {
        BankRepr {
            references: b.references,
            components: b.components,
        }
    }
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
    ///
    /// Errors say where: a component that cannot be read or is invalid is reported with its
    /// index in the file, its name (when it has one) and the line of the offending field (or
    /// of its `[[component]]` header when the field is missing). Required fields: `name`,
    /// `formula`, `cas`, `molar_mass`, `tc`, `pc`, `acentric`, `vc`, `hf298`, `gf298`,
    /// `elements`, `cp` (`form`, `coefficients`, `t_min`, `t_max`) and `sources`; optional:
    /// `aliases`, `tb`.
    pub fn from_toml_str(text: &str) -> Result<DataBank> {
        let mut table: toml::Table = text.parse().map_err(|e| Error::Data(format!("component file: {e}")))?;
        let comps = table.remove("component");
        let file: BankFile = toml::Value::Table(table)
            .try_into()
            .map_err(|e| Error::Data(format!("component file: {e}")))?;
        let mut bank = DataBank {
            references: file.references,
            components: Vec::new(),
            index: HashMap::new(),
        };
        let comps = match comps {
            None => Vec::new(),
            Some(toml::Value::Array(a)) => a,
            Some(_) => {
                return Err(Error::Data(
                    "component file: 'component' must be an array of tables ([[component]])".into(),
                ));
            }
        };
        let headers: Vec<usize> = text
            .lines()
            .enumerate()
            .filter(|(_, l)| l.trim_start().starts_with("[[component]]"))
            .map(|(i, _)| i)
            .collect();
        for (k, value) in comps.into_iter().enumerate() {
            let name = value.get("name").and_then(|v| v.as_str()).map(str::to_string);
            let start = headers.get(k).copied();
            let end = headers.get(k + 1).copied().unwrap_or(usize::MAX);
            let locate = |msg: String| -> Error {
                // The line of the field the message names, else the component's header.
                let field = [
                    "molar_mass",
                    "tc",
                    "pc",
                    "acentric",
                    "vc",
                    "tb",
                    "hf298",
                    "gf298",
                    "cp",
                    "name",
                    "cas",
                ]
                .into_iter()
                .find(|f| {
                    msg.contains(&format!("{f} =")) || msg.contains(&format!("`{f}`")) || msg.contains(&format!("{f}:"))
                });
                let line = start.map(|s| {
                    field
                        .and_then(|f| {
                            text.lines()
                                .enumerate()
                                .skip(s)
                                .take(end.saturating_sub(s))
                                .find(|(_, l)| {
                                    let l = l.trim_start();
                                    l.starts_with(f) && l[f.len()..].trim_start().starts_with(['=', '.'])
                                })
                                .map(|(i, _)| i)
                        })
                        .unwrap_or(s)
                        + 1
                });
                let who = match &name {
                    Some(n) => format!("component {k} ('{n}')"),
                    None => format!("component {k} (no name)"),
                };
                let at = line.map(|l| format!(", line {l}")).unwrap_or_default();
                let msg = msg
                    .strip_prefix(&format!("component '{}': ", name.clone().unwrap_or_default()))
                    .unwrap_or(&msg)
                    .to_string();
                Error::Data(format!("component file: {who}{at}: {msg}"))
            };
            // A value of the wrong type: name the first numeric field that is not a number.
            let wrong_type = ["molar_mass", "tc", "pc", "acentric", "vc", "tb", "hf298", "gf298"]
                .into_iter()
                .find(|f| value.get(*f).is_some_and(|v| !(v.is_float() || v.is_integer())));
            let c: Component = value.try_into().map_err(|e: toml::de::Error| {
                let msg = e.message().to_string();
                match wrong_type {
                    Some(f) if msg.contains("invalid type") => locate(format!("{f}: {msg}")),
                    _ => locate(msg),
                }
            })?;
            bank.add(c).map_err(|e| locate(e.message()))?;
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
        self.index
            .get(&normalise(key))
            .map(|&i| &self.components[i])
            .ok_or_else(|| self.unknown(key))
    }

    /// Looks several components up at once, in order. Two keys that name the same component
    /// (the same name twice, or a name and its alias or CAS number, e.g. "methane" and "CH4")
    /// are refused with [`Error::InvalidInput`]: a model has each component once.
    pub fn get_many<S: AsRef<str>>(&self, keys: &[S]) -> Result<Vec<Component>> {
        crate::error::check::count("components", keys.len(), 1, crate::limits::MAX_COMPONENTS)?;
        let mut ids: Vec<usize> = Vec::with_capacity(keys.len());
        for (pos, k) in keys.iter().enumerate() {
            let k = k.as_ref();
            let id = *self.index.get(&normalise(k)).ok_or_else(|| self.unknown(k))?;
            if let Some(first) = ids.iter().position(|&other| other == id) {
                return Err(Error::invalid(
                    "components",
                    format!(
                        "'{k}' (position {pos}) names '{}', already given as '{}' (position {first}); \
                         each component may appear once",
                        self.components[id].name,
                        keys[first].as_ref()
                    ),
                ));
            }
            ids.push(id);
        }
        Ok(ids.into_iter().map(|i| self.components[i].clone()).collect())
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
    fn embedded_bank_covers_the_required_compounds() {
        let bank = DataBank::embedded();
        assert!(bank.components().len() >= 40);
        for name in [
            "N2",
            "O2",
            "Ar",
            "H2",
            "He",
            "CO",
            "CO2",
            "H2S",
            "SO2",
            "NH3",
            "water",
            "methane",
            "ethane",
            "propane",
            "n-butane",
            "isobutane",
            "n-pentane",
            "isopentane",
            "n-hexane",
            "n-heptane",
            "n-octane",
            "n-nonane",
            "n-decane",
            "ethylene",
            "propylene",
            "benzene",
            "toluene",
            "o-xylene",
            "m-xylene",
            "p-xylene",
            "methanol",
            "ethanol",
            "acetone",
            "R-134a",
            "R-32",
        ] {
            let c = bank.get(name).unwrap_or_else(|e| panic!("{e}"));
            // Every constant names a source that the references table defines.
            for (field, src) in &c.sources {
                let key = src.split_whitespace().next().unwrap();
                assert!(
                    bank.references().contains_key(key),
                    "{}: {field} cites unknown '{key}'",
                    c.name
                );
            }
            assert!(c.ideal_gas(298.15).is_ok(), "{}", c.name);
        }
        // CAS look-up, case-insensitive names.
        assert_eq!(bank.get("7732-18-5").unwrap().name, bank.get("WATER").unwrap().name);
    }

    #[test]
    fn user_files_are_validated() {
        let good = r#"
            [references.mine]
            citation = "Our own measurements, lab notebook 7 (invented for this test)"
            [[component]]
            name = "testane"
            formula = "C9H20"
            cas = "0-00-0"
            molar_mass = 0.128
            tc = 594.6
            pc = 22.9e5
            acentric = 0.44
            vc = 548e-6
            hf298 = -228.0e3
            gf298 = 25.0e3
            elements = { C = 9, H = 20 }
            cp = { form = "poly4", coefficients = [4.0, 0.09, 0.0, 0.0, 0.0], t_min = 200.0, t_max = 1000.0 }
            sources = { molar_mass = "mine", tc = "mine", pc = "mine", acentric = "mine", vc = "mine", hf298 = "mine", gf298 = "mine", cp = "mine" }
        "#;
        let bank = DataBank::from_toml_str(good).unwrap();
        assert_eq!(bank.get("Testane").unwrap().tc, 594.6);
        // A missing source, an unknown reference key, an unknown field and a bad value are errors.
        let no_source = good.replace("cp = \"mine\" }", "}");
        assert!(
            DataBank::from_toml_str(&no_source)
                .unwrap_err()
                .to_string()
                .contains("no source")
        );
        let bad_key = good.replace("tc = \"mine\"", "tc = \"nobody\"");
        assert!(
            DataBank::from_toml_str(&bad_key)
                .unwrap_err()
                .to_string()
                .contains("not in [references]")
        );
        let unknown = good.replace("vc = 548e-6", "vc = 548e-6\n            colour = 3");
        assert!(DataBank::from_toml_str(&unknown).is_err());
        let negative = good.replace("tc = 594.6", "tc = -594.6");
        assert!(
            DataBank::from_toml_str(&negative)
                .unwrap_err()
                .to_string()
                .contains("tc")
        );
        let dup = format!("{good}\n{}", &good[good.find("[[component]]").unwrap()..]);
        assert!(
            DataBank::from_toml_str(&dup)
                .unwrap_err()
                .to_string()
                .contains("names both")
        );
    }

    #[test]
    fn file_errors_say_where() {
        let good = r#"[references.mine]
citation = "Invented for this test"
[[component]]
name = "testane"
formula = "C9H20"
cas = "0-00-0"
molar_mass = 0.128
tc = 594.6
pc = 22.9e5
acentric = 0.44
vc = 548e-6
hf298 = -228.0e3
gf298 = 25.0e3
elements = { C = 9, H = 20 }
cp = { form = "poly4", coefficients = [4.0, 0.09, 0.0, 0.0, 0.0], t_min = 200.0, t_max = 1000.0 }
sources = { molar_mass = "mine", tc = "mine", pc = "mine", acentric = "mine", vc = "mine", hf298 = "mine", gf298 = "mine", cp = "mine" }
"#;
        let err = |text: &str| DataBank::from_toml_str(text).unwrap_err().to_string();
        // A missing field: the component and its header line.
        let e = err(&good.replace("pc = 22.9e5\n", ""));
        assert!(e.contains("component 0 ('testane'), line 3") && e.contains("pc"), "{e}");
        // Negative and NaN critical constants: the line of the field.
        let e = err(&good.replace("tc = 594.6", "tc = -594.6"));
        assert!(e.contains("component 0 ('testane'), line 8: tc = -594.6"), "{e}");
        let e = err(&good.replace("pc = 22.9e5", "pc = nan"));
        assert!(e.contains("line 9: pc = NaN"), "{e}");
        // A cp range that is empty.
        let e = err(&good.replace("t_min = 200.0, t_max = 1000.0", "t_min = 900.0, t_max = 300.0"));
        assert!(e.contains("line 15") && e.contains("t_min < t_max"), "{e}");
        // A duplicate name: the second component, at its header.
        let dup = format!("{good}{}", &good[good.find("[[component]]").unwrap()..]);
        let e = err(&dup);
        assert!(
            e.contains("component 1 ('testane'), line 17") && e.contains("names both"),
            "{e}"
        );
        // A field of the wrong type.
        let e = err(&good.replace("tc = 594.6", "tc = \"hot\""));
        assert!(e.contains("component 0 ('testane')") && e.contains("line 8"), "{e}");
    }

    #[test]
    fn serde_round_trip_reindexes() {
        let text = serde_json::to_string(DataBank::embedded()).unwrap();
        let back: DataBank = serde_json::from_str(&text).unwrap();
        assert_eq!(back.get("ch4").unwrap().name, "methane");
        assert_eq!(&back, DataBank::embedded());
    }

    #[test]
    fn edit_distance_basic() {
        assert_eq!(edit_distance("kitten", "sitting"), 3);
        assert_eq!(edit_distance("", "abc"), 3);
    }
}
