//! Shared code of the example programs: unit parsing at the edge, model building from
//! command-line options, and plain-text tables.

pub mod calc;

use tieline::model::{CubicEos, CubicKind, KijMatrix, Model, model_from_json};
use tieline::substance::DataBank;
use tieline::{Error, Result};

/// Parses a temperature with an optional unit suffix: `300`, `300K`, `26.85C` → K.
pub fn parse_temperature(s: &str) -> Result<f64> {
    let s = s.trim();
    if let Ok(v) = s.parse::<f64>() {
        // Plain numbers, also nan, inf and 1e999 (inf): the library's checks word those.
        return Ok(v);
    }
    let (num, unit) = split_unit(s);
    let v: f64 = num
        .parse()
        .map_err(|_| Error::invalid("temperature", format!("'{s}' is not a number")))?;
    match unit.to_ascii_lowercase().as_str() {
        "" | "k" => Ok(v),
        "c" | "degc" => Ok(v + 273.15),
        other => Err(Error::invalid(
            "temperature",
            format!("unit '{other}'; K or C is allowed"),
        )),
    }
}

/// Parses a pressure with an optional unit suffix: `5e6`, `50bar`, `5MPa`, `101.325kPa` → Pa.
pub fn parse_pressure(s: &str) -> Result<f64> {
    let s = s.trim();
    if let Ok(v) = s.parse::<f64>() {
        return Ok(v);
    }
    let (num, unit) = split_unit(s);
    let v: f64 = num
        .parse()
        .map_err(|_| Error::invalid("pressure", format!("'{s}' is not a number")))?;
    let f = match unit.to_ascii_lowercase().as_str() {
        "" | "pa" => 1.0,
        "kpa" => 1e3,
        "mpa" => 1e6,
        "bar" => 1e5,
        "atm" => 101_325.0,
        other => {
            return Err(Error::invalid(
                "pressure",
                format!("unit '{other}'; Pa, kPa, MPa, bar or atm is allowed"),
            ));
        }
    };
    Ok(v * f)
}

fn split_unit(s: &str) -> (&str, &str) {
    let idx = s
        .char_indices()
        .find(|(i, c)| c.is_ascii_alphabetic() && !is_exponent(s, *i))
        .map(|(i, _)| i)
        .unwrap_or(s.len());
    (s[..idx].trim(), s[idx..].trim())
}

fn is_exponent(s: &str, i: usize) -> bool {
    let b = s.as_bytes();
    (b[i] == b'e' || b[i] == b'E')
        && i > 0
        && b[i - 1].is_ascii_digit()
        && i + 1 < b.len()
        && (b[i + 1].is_ascii_digit() || b[i + 1] == b'-' || b[i + 1] == b'+')
}

/// Parses a comma-separated list of numbers.
pub fn parse_list(what: &str, s: &str) -> Result<Vec<f64>> {
    s.split(',')
        .map(|x| {
            x.trim()
                .parse::<f64>()
                .map_err(|_| Error::invalid(what, format!("'{x}' is not a number")))
        })
        .collect()
}

/// Parses a cubic kind: `pr`, `pr78`, `srk`.
pub fn parse_kind(s: &str) -> Result<CubicKind> {
    match s.to_ascii_lowercase().as_str() {
        "pr" | "peng-robinson" => Ok(CubicKind::PengRobinson),
        "pr78" => Ok(CubicKind::PengRobinson78),
        "srk" | "soave" => Ok(CubicKind::SoaveRedlichKwong),
        other => Err(Error::invalid(
            "equation",
            format!("'{other}'; pr, pr78 or srk is allowed"),
        )),
    }
}

/// Builds a model from component names (looked up in `bank`), a kind and `i,j,k0[,k1]` pairs.
pub fn build_model(
    bank: &DataBank,
    names: &[String],
    kind: CubicKind,
    pairs: &[String],
    peneloux: bool,
) -> Result<Model> {
    let comps = bank.get_many(names)?;
    let nc = comps.len();
    let mut k = KijMatrix::zeros(nc);
    for p in pairs {
        let v = parse_list("kij", p)?;
        if v.len() != 3 && v.len() != 4 {
            return Err(Error::invalid("kij", format!("'{p}'; i,j,k0 or i,j,k0,k1 is required")));
        }
        let idx = |x: f64| {
            if x >= 0.0 && x.fract() == 0.0 {
                Ok(x as usize)
            } else {
                Err(Error::invalid("kij", format!("index {x}")))
            }
        };
        k.set(idx(v[0])?, idx(v[1])?, v[2], v.get(3).copied().unwrap_or(0.0))?;
    }
    let mut m = CubicEos::new(kind, comps)?.with_kij(k)?;
    if peneloux {
        m = m.with_peneloux_estimate()?;
    }
    Ok(Model::Cubic(m))
}

/// Reads a model description or full model from a JSON file.
pub fn model_from_file(path: &str, bank: &DataBank) -> Result<Model> {
    let text = std::fs::read_to_string(path).map_err(|e| Error::Data(format!("{path}: {e}")))?;
    model_from_json(&text, bank)
}

/// A plain-text table with a header row, columns right-aligned.
#[derive(Debug, Default)]
pub struct Table {
    rows: Vec<Vec<String>>,
}

impl Table {
    /// A table with the given header.
    pub fn new(header: &[&str]) -> Self {
        Table {
            rows: vec![header.iter().map(|s| s.to_string()).collect()],
        }
    }

    /// Appends a row.
    pub fn row(&mut self, cells: Vec<String>) {
        self.rows.push(cells);
    }

    /// Renders the table.
    pub fn render(&self) -> String {
        let ncol = self.rows.iter().map(|r| r.len()).max().unwrap_or(0);
        let width: Vec<usize> = (0..ncol)
            .map(|c| {
                self.rows
                    .iter()
                    .map(|r| r.get(c).map_or(0, |s| s.chars().count()))
                    .max()
                    .unwrap_or(0)
            })
            .collect();
        let mut out = String::new();
        for (k, r) in self.rows.iter().enumerate() {
            let line: Vec<String> = (0..ncol)
                .map(|c| {
                    let s = r.get(c).map_or("", |s| s.as_str());
                    if c == 0 {
                        format!("{s:<w$}", w = width[c])
                    } else {
                        format!("{s:>w$}", w = width[c])
                    }
                })
                .collect();
            out.push_str(line.join("  ").trim_end());
            out.push('\n');
            if k == 0 {
                out.push_str(&"-".repeat(width.iter().sum::<usize>() + 2 * ncol.saturating_sub(1)));
                out.push('\n');
            }
        }
        out
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn units_at_the_edge() {
        assert_eq!(parse_temperature("300").unwrap(), 300.0);
        assert!((parse_temperature("26.85C").unwrap() - 300.0).abs() < 1e-12);
        assert_eq!(parse_pressure("50bar").unwrap(), 5e6);
        assert_eq!(parse_pressure("5e6").unwrap(), 5e6);
        assert_eq!(parse_pressure("1.5e-1MPa").unwrap(), 1.5e5);
        assert!(parse_pressure("3psi").is_err());
        assert!(parse_temperature("abc").is_err());
    }
}
