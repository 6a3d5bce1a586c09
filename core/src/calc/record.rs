//! [`Record`]: a result as a list of named, unit-carrying fields, and [`Columns`]: many
//! records of one calculation stacked field by field.

use crate::error::{Error, Result};
use serde::{Deserialize, Serialize};
use serde_json::{Map, Value as Json};
use std::borrow::Cow;

/// The value of one field of a [`Record`].
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum Value {
    /// A real number (SI units).
    Number(f64),
    /// A count (iterations, number of phases).
    Count(u64),
    /// A yes/no answer.
    Flag(bool),
    /// A word (a phase kind, a branch name).
    Text(String),
    /// A vector of real numbers, e.g. one per phase or per component.
    Numbers(Vec<f64>),
    /// A vector of words, e.g. one phase kind per phase.
    Texts(Vec<String>),
    /// A table of real numbers, row by row (e.g. one composition row per phase); every row
    /// has the same length.
    Table(Vec<Vec<f64>>),
    /// Not available for this result (e.g. a certificate that was switched off).
    Absent,
}

/// One named field of a [`Record`].
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Field {
    /// The field's name (snake_case, stable across releases).
    pub name: Cow<'static, str>,
    /// Its unit (SI: "K", "Pa", "mol", "m3/mol", "J/mol", "J/(mol K)", "1" for
    /// dimensionless numbers, "" for counts, flags and words).
    pub unit: Cow<'static, str>,
    /// Its value.
    pub value: Value,
}

/// A calculation's result as named fields with units: the one description of results that
/// the C ABI, the Python package and the command-line tool all read.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, Default)]
pub struct Record {
    /// Which calculation produced it (see [`super::CALCULATIONS`]).
    pub kind: Cow<'static, str>,
    /// The fields, in a fixed order for each kind.
    pub fields: Vec<Field>,
}

impl Record {
    /// An empty record of calculation `kind`.
    pub fn new(kind: &'static str) -> Self {
        Record {
            kind: Cow::Borrowed(kind),
            fields: Vec::with_capacity(24),
        }
    }

    fn push(&mut self, name: &'static str, unit: &'static str, value: Value) -> &mut Self {
        self.fields.push(Field {
            name: Cow::Borrowed(name),
            unit: Cow::Borrowed(unit),
            value,
        });
        self
    }

    /// Adds a real number.
    pub fn number(&mut self, name: &'static str, unit: &'static str, v: f64) -> &mut Self {
        self.push(name, unit, Value::Number(v))
    }

    /// Adds a real number that may be unavailable.
    pub fn maybe(&mut self, name: &'static str, unit: &'static str, v: Option<f64>) -> &mut Self {
        self.push(name, unit, v.map_or(Value::Absent, Value::Number))
    }

    /// Adds a count.
    pub fn count(&mut self, name: &'static str, v: usize) -> &mut Self {
        self.push(name, "", Value::Count(v as u64))
    }

    /// Adds a flag.
    pub fn flag(&mut self, name: &'static str, v: bool) -> &mut Self {
        self.push(name, "", Value::Flag(v))
    }

    /// Adds a word.
    pub fn text(&mut self, name: &'static str, v: impl Into<String>) -> &mut Self {
        self.push(name, "", Value::Text(v.into()))
    }

    /// Adds a vector of real numbers.
    pub fn numbers(&mut self, name: &'static str, unit: &'static str, v: Vec<f64>) -> &mut Self {
        self.push(name, unit, Value::Numbers(v))
    }

    /// Adds a vector of words.
    pub fn texts(&mut self, name: &'static str, v: Vec<String>) -> &mut Self {
        self.push(name, "", Value::Texts(v))
    }

    /// Adds a table of real numbers (rows of equal length).
    pub fn table(&mut self, name: &'static str, unit: &'static str, rows: Vec<Vec<f64>>) -> &mut Self {
        self.push(name, unit, Value::Table(rows))
    }

    /// Checks that every number of the record is finite: a NaN or an infinity (e.g. an
    /// extensive quantity that overflowed for a feed of 1e300 mol) is an
    /// [`Error::NoSolution`] naming the field and the feed total (mol), never a value.
    pub fn check_finite(&self, feed: &[f64]) -> Result<()> {
        for f in &self.fields {
            let bad = match &f.value {
                Value::Number(x) => (!x.is_finite()).then_some(*x),
                Value::Numbers(v) => v.iter().copied().find(|x| !x.is_finite()),
                Value::Table(rows) => rows.iter().flatten().copied().find(|x| !x.is_finite()),
                _ => None,
            };
            if let Some(x) = bad {
                return Err(Error::NoSolution(format!(
                    "the {} result has {} for '{}' ({}), not a finite number: the floating-point range is \
                     exceeded at these inputs (feed total {} mol); scale the feed amounts down",
                    self.kind,
                    crate::error::num(x),
                    f.name,
                    if f.unit.is_empty() { "1" } else { f.unit.as_ref() },
                    crate::error::num(feed.iter().sum::<f64>())
                )));
            }
        }
        Ok(())
    }

    /// The field called `name`, if the record has one.
    pub fn field(&self, name: &str) -> Option<&Field> {
        self.fields.iter().find(|f| f.name == name)
    }

    /// The field called `name`, or an [`Error::InvalidInput`] listing the fields there are.
    pub fn get(&self, name: &str) -> Result<&Field> {
        self.field(name).ok_or_else(|| {
            let names: Vec<&str> = self.fields.iter().map(|f| f.name.as_ref()).collect();
            Error::invalid(
                "field",
                format!(
                    "'{name}' is not a field of a {} result; its fields are: {}",
                    self.kind,
                    names.join(", ")
                ),
            )
        })
    }

    /// The real number `name` (a count reads as a number too).
    pub fn get_number(&self, name: &str) -> Result<f64> {
        match &self.get(name)?.value {
            Value::Number(x) => Ok(*x),
            Value::Count(n) => Ok(*n as f64),
            Value::Absent => Err(Error::NoSolution(format!(
                "the field '{name}' is not available in this {} result",
                self.kind
            ))),
            other => Err(Error::invalid(
                "field",
                format!("'{name}' holds {}, not a single number", shape_name(other)),
            )),
        }
    }

    /// The numbers of field `name` flattened row by row (a single number reads as one value,
    /// a table row by row), with the table's (rows, columns) or (len, 1).
    pub fn get_numbers(&self, name: &str) -> Result<(Vec<f64>, usize, usize)> {
        match &self.get(name)?.value {
            Value::Number(x) => Ok((vec![*x], 1, 1)),
            Value::Count(n) => Ok((vec![*n as f64], 1, 1)),
            Value::Numbers(v) => Ok((v.clone(), v.len(), 1)),
            Value::Table(rows) => {
                let cols = rows.first().map_or(0, Vec::len);
                Ok((rows.iter().flatten().copied().collect(), rows.len(), cols))
            }
            Value::Absent => Err(Error::NoSolution(format!(
                "the field '{name}' is not available in this {} result",
                self.kind
            ))),
            other => Err(Error::invalid(
                "field",
                format!("'{name}' holds {}, not numbers", shape_name(other)),
            )),
        }
    }

    /// The record as one JSON object: `{"kind": ..., <field>: <value>, ..., "units": {<field>:
    /// <unit>}}`. Absent values are `null`; tables are arrays of rows.
    pub fn to_json(&self) -> Json {
        let mut m = Map::new();
        let mut units = Map::new();
        m.insert("kind".into(), Json::String(self.kind.to_string()));
        for f in &self.fields {
            m.insert(f.name.to_string(), value_json(&f.value));
            if !f.unit.is_empty() {
                units.insert(f.name.to_string(), Json::String(f.unit.to_string()));
            }
        }
        m.insert("units".into(), Json::Object(units));
        Json::Object(m)
    }
}

fn shape_name(v: &Value) -> &'static str {
    match v {
        Value::Number(_) => "a number",
        Value::Count(_) => "a count",
        Value::Flag(_) => "a flag",
        Value::Text(_) => "a word",
        Value::Numbers(_) => "a vector of numbers",
        Value::Texts(_) => "a vector of words",
        Value::Table(_) => "a table",
        Value::Absent => "nothing",
    }
}

fn num_json(x: f64) -> Json {
    serde_json::Number::from_f64(x).map_or(Json::Null, Json::Number)
}

fn value_json(v: &Value) -> Json {
    match v {
        Value::Number(x) => num_json(*x),
        Value::Count(n) => Json::from(*n),
        Value::Flag(b) => Json::Bool(*b),
        Value::Text(s) => Json::String(s.clone()),
        Value::Numbers(v) => Json::Array(v.iter().map(|x| num_json(*x)).collect()),
        Value::Texts(v) => Json::Array(v.iter().map(|s| Json::String(s.clone())).collect()),
        Value::Table(rows) => Json::Array(
            rows.iter()
                .map(|r| Json::Array(r.iter().map(|x| num_json(*x)).collect()))
                .collect(),
        ),
        Value::Absent => Json::Null,
    }
}

/// The data of one column of [`Columns`]: one entry per point (times the per-point shape).
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum ColumnData {
    /// Real numbers; NaN marks a failed point or an unused slot (e.g. an absent phase).
    Numbers(Vec<f64>),
    /// Counts; 0 at a failed point.
    Counts(Vec<u64>),
    /// Flags; false at a failed point.
    Flags(Vec<bool>),
    /// Words; empty at a failed point or an unused slot.
    Texts(Vec<String>),
}

/// One field of many records stacked: `data` holds `points × Π shape` entries, point-major.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Column {
    /// The field's name.
    pub name: String,
    /// Its unit.
    pub unit: String,
    /// Shape of the field at one point: `[]` for a number, `[k]` for a vector padded to the
    /// longest one, `[rows, cols]` for a table padded likewise.
    pub shape: Vec<usize>,
    /// The values.
    pub data: ColumnData,
}

/// Many records of one calculation, field by field (for vectorised calls): vectors and
/// tables that differ in length between points (e.g. the number of phases) are padded with
/// NaN (numbers) or "" (words) to the longest. Failed points are listed in `failures` and
/// hold NaN / 0 / false / "".
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, Default)]
pub struct Columns {
    /// The calculation.
    pub kind: String,
    /// Number of points.
    pub points: usize,
    /// The columns, in the field order of the records.
    pub columns: Vec<Column>,
    /// Whether each point succeeded.
    pub ok: Vec<bool>,
    /// The failed points: index and error.
    #[serde(skip)]
    pub failures: Vec<(usize, Error)>,
}

impl Columns {
    /// Stacks `results` (one per point) field by field.
    pub fn from_results(kind: &str, results: Vec<Result<Record>>) -> Columns {
        let points = results.len();
        let mut ok = Vec::with_capacity(points);
        let mut failures = Vec::new();
        let mut records: Vec<Option<Record>> = Vec::with_capacity(points);
        for (i, r) in results.into_iter().enumerate() {
            match r {
                Ok(r) => {
                    ok.push(true);
                    records.push(Some(r));
                }
                Err(e) => {
                    ok.push(false);
                    failures.push((i, e));
                    records.push(None);
                }
            }
        }
        // The field list: the union over points, in first-seen order. Records of one
        // calculation usually list the same fields in the same order; only a record that
        // differs from the list so far is merged into it name by name.
        let mut names: Vec<(String, String)> = Vec::new();
        for r in records.iter().flatten() {
            let same =
                r.fields.len() <= names.len() && r.fields.iter().zip(&names).all(|(f, (n, _))| f.name == n.as_str());
            if same {
                continue;
            }
            for f in &r.fields {
                if !names.iter().any(|(n, _)| n == f.name.as_ref()) {
                    names.push((f.name.to_string(), f.unit.to_string()));
                }
            }
        }
        // Columns are independent: stack them in parallel.
        use rayon::prelude::*;
        let columns = names
            .into_par_iter()
            .enumerate()
            .map(|(k, (name, unit))| stack(&records, k, name, unit))
            .collect();
        Columns {
            kind: kind.to_string(),
            points,
            columns,
            ok,
            failures,
        }
    }

    /// The column called `name`.
    pub fn column(&self, name: &str) -> Option<&Column> {
        self.columns.iter().find(|c| c.name == name)
    }
}

/// Stacks the field `name`, usually the `k`-th of every record (records of one calculation list
/// their fields in one order; a record that differs is searched by name).
fn stack(records: &[Option<Record>], k: usize, name: String, unit: String) -> Column {
    let values: Vec<Option<&Value>> = records
        .iter()
        .map(|r| {
            r.as_ref()
                .and_then(|r| match r.fields.get(k) {
                    Some(f) if f.name == name => Some(f),
                    _ => r.field(&name),
                })
                .map(|f| &f.value)
        })
        .collect();
    // The kind of the column: the first non-absent value decides.
    let first = values.iter().flatten().find(|v| !matches!(v, Value::Absent)).copied();
    let n = values.len();
    match first {
        Some(Value::Count(_)) => {
            let data = values
                .iter()
                .map(|v| match v {
                    Some(Value::Count(c)) => *c,
                    _ => 0,
                })
                .collect();
            Column {
                name,
                unit,
                shape: vec![],
                data: ColumnData::Counts(data),
            }
        }
        Some(Value::Flag(_)) => {
            let data = values.iter().map(|v| matches!(v, Some(Value::Flag(true)))).collect();
            Column {
                name,
                unit,
                shape: vec![],
                data: ColumnData::Flags(data),
            }
        }
        Some(Value::Text(_)) => {
            let data = values
                .iter()
                .map(|v| match v {
                    Some(Value::Text(s)) => s.clone(),
                    _ => String::new(),
                })
                .collect();
            Column {
                name,
                unit,
                shape: vec![],
                data: ColumnData::Texts(data),
            }
        }
        Some(Value::Texts(_)) => {
            let k = values
                .iter()
                .map(|v| match v {
                    Some(Value::Texts(t)) => t.len(),
                    _ => 0,
                })
                .max()
                .unwrap_or(0);
            let mut data = vec![String::new(); n * k];
            for (i, v) in values.iter().enumerate() {
                if let Some(Value::Texts(t)) = v {
                    for (j, s) in t.iter().enumerate() {
                        data[i * k + j] = s.clone();
                    }
                }
            }
            Column {
                name,
                unit,
                shape: vec![k],
                data: ColumnData::Texts(data),
            }
        }
        Some(Value::Numbers(_)) => {
            let k = values
                .iter()
                .map(|v| match v {
                    Some(Value::Numbers(t)) => t.len(),
                    _ => 0,
                })
                .max()
                .unwrap_or(0);
            let mut data = vec![f64::NAN; n * k];
            for (i, v) in values.iter().enumerate() {
                if let Some(Value::Numbers(t)) = v {
                    data[i * k..i * k + t.len()].copy_from_slice(t);
                }
            }
            Column {
                name,
                unit,
                shape: vec![k],
                data: ColumnData::Numbers(data),
            }
        }
        Some(Value::Table(_)) => {
            let (mut rows, mut cols) = (0, 0);
            for v in values.iter().flatten() {
                if let Value::Table(t) = v {
                    rows = rows.max(t.len());
                    cols = cols.max(t.iter().map(Vec::len).max().unwrap_or(0));
                }
            }
            let mut data = vec![f64::NAN; n * rows * cols];
            for (i, v) in values.iter().enumerate() {
                if let Some(Value::Table(t)) = v {
                    for (r, row) in t.iter().enumerate() {
                        let at = i * rows * cols + r * cols;
                        data[at..at + row.len()].copy_from_slice(row);
                    }
                }
            }
            Column {
                name,
                unit,
                shape: vec![rows, cols],
                data: ColumnData::Numbers(data),
            }
        }
        // Numbers, or a field absent everywhere (then NaN throughout).
        _ => {
            let data = values
                .iter()
                .map(|v| match v {
                    Some(Value::Number(x)) => *x,
                    _ => f64::NAN,
                })
                .collect();
            Column {
                name,
                unit,
                shape: vec![],
                data: ColumnData::Numbers(data),
            }
        }
    }
}

/// Checks the keys of a JSON options object against the keys of the options' defaults
/// (recursively into nested option groups), so a misspelt option is an error that lists the
/// known ones rather than a silently ignored setting.
pub(crate) fn check_option_keys(given: &Json, defaults: &Json, path: &str) -> Result<()> {
    let (Json::Object(g), Json::Object(d)) = (given, defaults) else {
        return Ok(());
    };
    for (k, v) in g {
        let full = if path.is_empty() {
            k.clone()
        } else {
            format!("{path}.{k}")
        };
        match d.get(k) {
            None => {
                let known: Vec<&str> = d.keys().map(String::as_str).collect();
                return Err(Error::invalid(
                    "options",
                    format!("unknown option '{full}'; the known options are: {}", known.join(", ")),
                ));
            }
            Some(dv) => check_option_keys(v, dv, &full)?,
        }
    }
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::*;

    fn rec(phases: usize) -> Record {
        let mut r = Record::new("demo");
        r.number("temperature", "K", 300.0)
            .count("num_phases", phases)
            .numbers("phase_amounts", "mol", vec![0.5; phases])
            .texts("phase_kinds", vec!["vapor".into(); phases])
            .table("compositions", "1", vec![vec![0.25, 0.75]; phases])
            .maybe("certificate", "1", None);
        r
    }

    #[test]
    fn fields_read_back_with_typed_errors() {
        let r = rec(2);
        assert_eq!(r.get_number("temperature").unwrap(), 300.0);
        assert_eq!(r.get_number("num_phases").unwrap(), 2.0);
        let (v, rows, cols) = r.get_numbers("compositions").unwrap();
        assert_eq!((v.len(), rows, cols), (4, 2, 2));
        let e = r.get_number("pressure").unwrap_err();
        assert!(e.to_string().contains("temperature, num_phases"), "{e}");
        assert_eq!(
            r.get_number("certificate").unwrap_err().kind(),
            crate::ErrorKind::NoSolution
        );
        assert_eq!(
            r.get_number("compositions").unwrap_err().kind(),
            crate::ErrorKind::InvalidInput
        );
        let j = r.to_json();
        assert_eq!(j["units"]["temperature"], "K");
        assert!(j["certificate"].is_null());
    }

    #[test]
    fn columns_pad_ragged_fields_and_mark_failures() {
        let c = Columns::from_results("demo", vec![Ok(rec(1)), Err(Error::NoSolution("x".into())), Ok(rec(2))]);
        assert_eq!(c.ok, vec![true, false, true]);
        assert_eq!(c.failures.len(), 1);
        let a = c.column("phase_amounts").unwrap();
        assert_eq!(a.shape, vec![2]);
        let ColumnData::Numbers(d) = &a.data else { panic!() };
        assert_eq!(d[0], 0.5);
        assert!(d[1].is_nan() && d[2].is_nan() && d[3].is_nan());
        assert_eq!(&d[4..], &[0.5, 0.5]);
        let k = c.column("compositions").unwrap();
        assert_eq!(k.shape, vec![2, 2]);
        let ColumnData::Texts(t) = &c.column("phase_kinds").unwrap().data else {
            panic!()
        };
        assert_eq!(t[1], "");
        let ColumnData::Counts(n) = &c.column("num_phases").unwrap().data else {
            panic!()
        };
        assert_eq!(n, &vec![1, 0, 2]);
    }

    #[test]
    fn misspelt_options_are_refused_with_the_known_ones() {
        let d = serde_json::json!({"tolerance": 1e-10, "flash": {"max_phases": 2}});
        assert!(check_option_keys(&serde_json::json!({"tolerance": 1e-8}), &d, "").is_ok());
        let e = check_option_keys(&serde_json::json!({"tolerence": 1e-8}), &d, "").unwrap_err();
        assert!(
            e.to_string().contains("'tolerence'") && e.to_string().contains("flash, tolerance"),
            "{e}"
        );
        let e = check_option_keys(&serde_json::json!({"flash": {"phases": 3}}), &d, "").unwrap_err();
        assert!(e.to_string().contains("'flash.phases'"), "{e}");
    }
}
