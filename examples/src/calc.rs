//! The command line's view of `tieline::calc`: arguments given as `name=value` (with unit
//! suffixes for temperatures and pressures), options as `key=value` (JSON values), and a
//! record printed as a table of fields or as JSON.

use crate::{Table, parse_pressure, parse_temperature};
use serde_json::{Map, Value as Json};
use tieline::calc::{Calculation, Record, Value};
use tieline::{Error, Result};

/// The scalar arguments of `calc` in its order, from `name=value` pairs; values of arguments
/// in K or Pa accept the unit suffixes of [`parse_temperature`] and [`parse_pressure`].
pub fn arguments(calc: &Calculation, given: &[String]) -> Result<Vec<f64>> {
    let mut out = vec![None; calc.arguments.len()];
    for pair in given {
        let (k, v) = pair.split_once('=').ok_or_else(|| {
            Error::invalid(
                "argument",
                format!("'{pair}'; name=value is required, e.g. pressure=1atm"),
            )
        })?;
        let k = k.trim();
        let idx = calc.arguments.iter().position(|a| a.name == k).ok_or_else(|| {
            Error::invalid(
                "argument",
                format!("'{k}' is not an argument of {}; it takes {}", calc.name, list(calc)),
            )
        })?;
        let a = &calc.arguments[idx];
        let x = match a.unit {
            "K" => parse_temperature(v)?,
            "Pa" => parse_pressure(v)?,
            _ => v
                .trim()
                .parse()
                .map_err(|_| Error::invalid(a.name, format!("'{v}' is not a number ({})", a.unit)))?,
        };
        out[idx] = Some(x);
    }
    out.into_iter()
        .zip(calc.arguments)
        .map(|(x, a)| {
            x.ok_or_else(|| {
                Error::invalid(
                    "argument",
                    format!("{} is missing; {} takes {}", a.name, calc.name, list(calc)),
                )
            })
        })
        .collect()
}

fn list(calc: &Calculation) -> String {
    let v: Vec<String> = calc
        .arguments
        .iter()
        .map(|a| format!("{}=<{}>", a.name, a.unit))
        .collect();
    if v.is_empty() {
        "no arguments".into()
    } else {
        v.join(" ")
    }
}

/// Options from `key=value` pairs as a JSON object: each value is read as JSON (`1e-12`,
/// `true`, `[0.5]`) or else taken as a string; a dotted key (`flash.max_phases=3`) sets a
/// nested option.
pub fn options(given: &[String]) -> Result<Option<Json>> {
    if given.is_empty() {
        return Ok(None);
    }
    let mut root = Map::new();
    for pair in given {
        let (k, v) = pair.split_once('=').ok_or_else(|| {
            Error::invalid(
                "option",
                format!("'{pair}'; key=value is required, e.g. tolerance=1e-12"),
            )
        })?;
        let value = serde_json::from_str::<Json>(v.trim()).unwrap_or_else(|_| Json::String(v.trim().to_string()));
        let mut keys = k.trim().split('.').peekable();
        let mut at = &mut root;
        while let Some(key) = keys.next() {
            if keys.peek().is_none() {
                at.insert(key.to_string(), value.clone());
                break;
            }
            let e = at.entry(key.to_string()).or_insert_with(|| Json::Object(Map::new()));
            at = match e {
                Json::Object(m) => m,
                _ => {
                    return Err(Error::invalid(
                        "option",
                        format!("'{k}': {key} is not a group of options"),
                    ));
                }
            };
        }
    }
    Ok(Some(Json::Object(root)))
}

fn number(x: f64) -> String {
    if x != 0.0 && (x.abs() >= 1e6 || x.abs() < 1e-3) {
        format!("{x:.6e}")
    } else {
        format!("{x:.6}")
    }
}

fn numbers(v: &[f64]) -> String {
    v.iter().map(|x| number(*x)).collect::<Vec<_>>().join(", ")
}

/// The record as a table: field, value, unit (tables row by row).
pub fn render(rec: &Record) -> String {
    let mut t = Table::new(&["field", "value", "unit"]);
    for f in &rec.fields {
        let rows: Vec<String> = match &f.value {
            Value::Number(x) => vec![number(*x)],
            Value::Count(n) => vec![n.to_string()],
            Value::Flag(b) => vec![b.to_string()],
            Value::Text(s) => vec![s.clone()],
            Value::Numbers(v) => vec![numbers(v)],
            Value::Texts(v) => vec![v.join(", ")],
            Value::Table(rows) if rows.is_empty() => vec![String::new()],
            Value::Table(rows) => rows.iter().map(|r| numbers(r)).collect(),
            Value::Absent => vec!["-".into()],
        };
        for (i, r) in rows.into_iter().enumerate() {
            let name = if i == 0 { f.name.to_string() } else { format!("  [{i}]") };
            t.row(vec![name, r, f.unit.to_string()]);
        }
    }
    format!("{}\n{}", rec.kind, t.render())
}

/// The list of calculations with their arguments and default options.
pub fn catalogue() -> String {
    let mut out = String::new();
    for c in tieline::calc::CALCULATIONS {
        out.push_str(&format!("{}  {}\n    {}\n", c.name, list(c), c.summary));
        out.push_str(&format!("    options: {}\n", c.default_options()));
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn arguments_by_name_with_units_and_errors() {
        let c = tieline::calc::find("flash_pt").unwrap();
        let a = arguments(c, &["pressure=2bar".into(), "temperature=25C".into()]).unwrap();
        assert_eq!(a, vec![298.15, 2e5]);
        let e = arguments(c, &["temperature=300".into()]).unwrap_err();
        assert!(e.to_string().contains("pressure is missing"), "{e}");
        let e = arguments(c, &["volume=1".into()]).unwrap_err();
        assert!(e.to_string().contains("temperature=<K> pressure=<Pa>"), "{e}");
        assert!(arguments(c, &["temperature".into()]).is_err());
    }

    #[test]
    fn options_nest_on_dots() {
        let o = options(&["tolerance=1e-12".into(), "stability.max_iterations=50".into()])
            .unwrap()
            .unwrap();
        assert_eq!(o["tolerance"], 1e-12);
        assert_eq!(o["stability"]["max_iterations"], 50);
        assert!(options(&["x".into()]).is_err());
    }
}
