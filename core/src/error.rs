//! The one error type of the library.
//!
//! Every fallible function returns [`Result<T>`](crate::Result). Each variant carries a message
//! that says what was wrong and, where it helps, what is allowed. Bindings map the variants to
//! C status codes and Python exceptions once, at their edge, through [`Error::kind`].

use serde::{Deserialize, Serialize};
use std::fmt;

/// Result alias used throughout the crate.
pub type Result<T, E = Error> = std::result::Result<T, E>;

/// Coarse classification of an [`Error`], stable across releases, used by the C ABI and
/// the Python package to pick a status code or exception class.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, Serialize, Deserialize)]
#[non_exhaustive]
pub enum ErrorKind {
    /// An argument was out of its allowed domain (non-finite, non-positive, wrong length ...).
    InvalidInput,
    /// A component name, alias or CAS number is not in the data bank.
    UnknownComponent,
    /// The conditions lie outside the validity range of a model or correlation.
    OutsideValidity,
    /// The requested state does not exist (e.g. saturation above the critical point,
    /// a dew point above the cricondentherm).
    NoSolution,
    /// An iterative method did not reach its tolerance; diagnostics are attached.
    NotConverged,
    /// Component or model data could not be parsed or is inconsistent.
    Data,
}

impl fmt::Display for ErrorKind {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        let s = match self {
            ErrorKind::InvalidInput => "invalid input",
            ErrorKind::UnknownComponent => "unknown component",
            ErrorKind::OutsideValidity => "outside validity range",
            ErrorKind::NoSolution => "no solution",
            ErrorKind::NotConverged => "not converged",
            ErrorKind::Data => "data error",
        };
        f.write_str(s)
    }
}

/// What an iterative method had reached when it stopped, attached to
/// [`Error::NotConverged`] so a failure can be diagnosed rather than guessed at.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, Default)]
pub struct FailureDiagnostics {
    /// Iterations spent, per stage, in the order the stages ran.
    pub iterations: Vec<(String, usize)>,
    /// The last value of the convergence measure (dimensionless).
    pub residual: f64,
    /// The tolerance the measure had to reach (dimensionless).
    pub tolerance: f64,
}

/// The error type of the library.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
#[non_exhaustive]
pub enum Error {
    /// An argument was out of its allowed domain.
    #[error("invalid input: {what}: {detail}")]
    InvalidInput {
        /// Which argument.
        what: String,
        /// What was wrong and what is allowed.
        detail: String,
    },
    /// A component could not be found in the data bank.
    #[error("unknown component '{name}'{}", suggest(.suggestions))]
    UnknownComponent {
        /// The name that was asked for.
        name: String,
        /// The closest known names, best first.
        suggestions: Vec<String>,
    },
    /// Conditions outside the stated validity range of a model or correlation.
    #[error("outside validity range: {what} = {} is outside [{}, {}] ({detail})", num(*.value), num(*.min), num(*.max))]
    OutsideValidity {
        /// Which quantity.
        what: String,
        /// Its value (SI units).
        value: f64,
        /// Lower limit of the validity range (SI units).
        min: f64,
        /// Upper limit of the validity range (SI units).
        max: f64,
        /// Which model or correlation, and what to do.
        detail: String,
    },
    /// The requested state does not exist.
    #[error("no solution: {0}")]
    NoSolution(String),
    /// An iterative method stopped before reaching its tolerance.
    #[error("{method} did not converge: residual {} > tolerance {} after {}", num(.diagnostics.residual), num(.diagnostics.tolerance), iters(.diagnostics))]
    NotConverged {
        /// Which method.
        method: String,
        /// What it had reached.
        diagnostics: Box<FailureDiagnostics>,
    },
    /// Data could not be parsed or is inconsistent.
    #[error("data error: {0}")]
    Data(String),
}

/// A number as every message of the library prints it: the shortest decimal form that reads
/// back to the same `f64`, positional for 1e-3 <= |x| < 1e6 (`190.564`, `0.5`, `101325`) and
/// with an exponent otherwise (`1e-300`, `1e-11`, `2.5e6`); `NaN`, `inf` and `-inf` for the
/// non-finite values. Never more digits than the value needs.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Num(pub f64);

impl fmt::Display for Num {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        let x = self.0;
        if x.is_nan() {
            f.write_str("NaN")
        } else if x.is_infinite() {
            f.write_str(if x > 0.0 { "inf" } else { "-inf" })
        } else if x == 0.0 || (1e-3..1e6).contains(&x.abs()) {
            write!(f, "{x}")
        } else {
            write!(f, "{x:e}")
        }
    }
}

/// Shorthand for [`Num`]: `format!("{} K", num(t))`.
pub fn num(x: f64) -> Num {
    Num(x)
}

/// A list of numbers in the form of [`Num`], comma-separated in brackets.
pub fn nums(xs: &[f64]) -> String {
    let parts: Vec<String> = xs.iter().map(|&x| num(x).to_string()).collect();
    format!("[{}]", parts.join(", "))
}

fn suggest(s: &[String]) -> String {
    if s.is_empty() {
        String::new()
    } else {
        format!("; did you mean: {}?", s.join(", "))
    }
}

fn iters(d: &FailureDiagnostics) -> String {
    let parts: Vec<String> = d
        .iterations
        .iter()
        .map(|(s, n)| format!("{n} {s} iterations"))
        .collect();
    if parts.is_empty() {
        "0 iterations".into()
    } else {
        parts.join(", ")
    }
}

impl Error {
    /// The coarse kind of this error (stable; used by the bindings).
    pub fn kind(&self) -> ErrorKind {
        match self {
            Error::InvalidInput { .. } => ErrorKind::InvalidInput,
            Error::UnknownComponent { .. } => ErrorKind::UnknownComponent,
            Error::OutsideValidity { .. } => ErrorKind::OutsideValidity,
            Error::NoSolution(_) => ErrorKind::NoSolution,
            Error::NotConverged { .. } => ErrorKind::NotConverged,
            Error::Data(_) => ErrorKind::Data,
        }
    }

    /// The message without its kind's prefix ("invalid input: ", "no solution: ", "data
    /// error: ", "outside validity range: "): the text to put inside another message, so that
    /// no prefix reads twice.
    pub fn message(&self) -> String {
        let s = self.to_string();
        for prefix in [
            "invalid input: ",
            "no solution: ",
            "data error: ",
            "outside validity range: ",
        ] {
            if let Some(rest) = s.strip_prefix(prefix) {
                return rest.to_string();
            }
        }
        s
    }

    /// Re-labels an error that arose inside `method` after the caller's inputs had been
    /// checked: an [`Error::InvalidInput`] there never concerns what the caller gave but an
    /// intermediate value (a trial composition, a volume, a pressure of the iteration) that
    /// became non-finite or left its domain, i.e. a divergence. It becomes
    /// [`Error::NotConverged`] naming the method, the state (T in K, p in Pa), the quantity
    /// that left its domain and the iterations spent; every other error passes unchanged.
    pub fn from_inside(self, method: &str, t: f64, p: f64, iterations: Vec<(String, usize)>, tolerance: f64) -> Error {
        match self {
            Error::InvalidInput { what, .. } => Error::NotConverged {
                method: format!(
                    "{method} at T = {} K, p = {} Pa (diverged: an intermediate {what} of the \
                     iteration became non-finite or left its domain; the inputs given are valid)",
                    num(t),
                    num(p)
                ),
                diagnostics: Box::new(FailureDiagnostics {
                    iterations,
                    residual: f64::NAN,
                    tolerance,
                }),
            },
            other => other,
        }
    }

    /// Shorthand for [`Error::InvalidInput`].
    pub fn invalid(what: impl Into<String>, detail: impl Into<String>) -> Self {
        Error::InvalidInput {
            what: what.into(),
            detail: detail.into(),
        }
    }

    /// Shorthand for [`Error::NotConverged`].
    pub fn not_converged(
        method: impl Into<String>,
        iterations: Vec<(String, usize)>,
        residual: f64,
        tolerance: f64,
    ) -> Self {
        Error::NotConverged {
            method: method.into(),
            diagnostics: Box::new(FailureDiagnostics {
                iterations,
                residual,
                tolerance,
            }),
        }
    }
}

/// Input checks shared by every public entry point (and by the bindings, so that their
/// messages read the same).
pub mod check {
    use super::{Error, Result, num};

    /// A finite value > 0 in `unit`; NaN, ±inf (also an overflowed literal such as 1e999) and
    /// values <= 0 are refused with one wording everywhere.
    pub fn positive(what: &str, x: f64, unit: &str) -> Result<()> {
        if x.is_finite() && x > 0.0 {
            Ok(())
        } else if !x.is_finite() {
            Err(Error::invalid(
                what,
                format!(
                    "{} {unit} is not a finite number; a finite value > 0 {unit} is required",
                    num(x)
                ),
            ))
        } else {
            Err(Error::invalid(
                what,
                format!("{} {unit}; a finite value > 0 {unit} is required", num(x)),
            ))
        }
    }

    /// A temperature: finite and > 0 K.
    pub fn temperature(t: f64) -> Result<()> {
        positive("temperature", t, "K")
    }

    /// A pressure: finite and > 0 Pa.
    pub fn pressure(p: f64) -> Result<()> {
        positive("pressure", p, "Pa")
    }

    /// A molar volume or volume: finite and > 0 m3.
    pub fn volume(v: f64) -> Result<()> {
        positive("volume", v, "m3")
    }

    /// A count (threads, iterations, points, components ...) in `[min, max]`; `max` is one of
    /// the documented limits of [`crate::limits`].
    pub fn count(what: &str, n: usize, min: usize, max: usize) -> Result<()> {
        if (min..=max).contains(&n) {
            Ok(())
        } else {
            Err(Error::invalid(
                what,
                format!("{n}; an integer from {min} to {max} is required"),
            ))
        }
    }

    /// Components of one model: no name or CAS number twice (names compared
    /// case-insensitively; an empty CAS number is not compared).
    pub fn distinct(components: &[crate::substance::Component]) -> Result<()> {
        for (j, b) in components.iter().enumerate() {
            for (i, a) in components[..j].iter().enumerate() {
                let same_name = a.name.trim().eq_ignore_ascii_case(b.name.trim());
                let same_cas = !a.cas.trim().is_empty() && a.cas.trim() == b.cas.trim();
                if same_name || same_cas {
                    return Err(Error::invalid(
                        "components",
                        format!(
                            "'{}' (position {j}) is the same component as '{}' (position {i}){}; \
                             each component may appear once",
                            b.name,
                            a.name,
                            if same_name {
                                String::new()
                            } else {
                                format!(", CAS {}", a.cas)
                            }
                        ),
                    ));
                }
            }
        }
        Ok(())
    }

    /// Amounts: the right length, each finite and >= 0 mol, sum > 0. Returns the sum.
    pub fn amounts(n: &[f64], expected_len: usize) -> Result<f64> {
        if n.len() != expected_len {
            return Err(Error::invalid(
                "amounts",
                format!("{} values given for a model of {} components", n.len(), expected_len),
            ));
        }
        let mut sum = 0.0;
        for (i, &x) in n.iter().enumerate() {
            if !x.is_finite() {
                return Err(Error::invalid(
                    "amounts",
                    format!(
                        "amount of component {i} is {} mol, not a finite number; finite values >= 0 are required",
                        num(x)
                    ),
                ));
            }
            if x < 0.0 {
                return Err(Error::invalid(
                    "amounts",
                    format!(
                        "amount of component {i} is {} mol; finite values >= 0 are required",
                        num(x)
                    ),
                ));
            }
            sum += x;
        }
        if !(sum > 0.0) || !sum.is_finite() {
            return Err(Error::invalid(
                "amounts",
                format!(
                    "total amount is {} mol; at least one amount must be > 0 and the sum finite",
                    num(sum)
                ),
            ));
        }
        Ok(sum)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn messages_say_what_and_what_is_allowed() {
        let e = check::temperature(-3.0).unwrap_err();
        assert_eq!(e.kind(), ErrorKind::InvalidInput);
        assert!(e.to_string().contains("> 0 K"));
        let e = check::amounts(&[1.0, f64::NAN], 2).unwrap_err();
        assert!(e.to_string().contains("component 1"));
        let e = check::amounts(&[0.0, 0.0], 2).unwrap_err();
        assert!(e.to_string().contains("at least one"));
        let e = check::amounts(&[1.0], 2).unwrap_err();
        assert!(e.to_string().contains("1 values given"));
        let e = Error::UnknownComponent {
            name: "methan".into(),
            suggestions: vec!["methane".into()],
        };
        assert!(e.to_string().contains("did you mean: methane"));
        let e = Error::not_converged("flash", vec![("SS".into(), 3)], 1e-3, 1e-10);
        assert_eq!(e.kind(), ErrorKind::NotConverged);
        assert!(e.to_string().contains("3 SS iterations"));
        assert!(e.to_string().contains("residual 0.001 > tolerance 1e-10"), "{e}");
    }

    #[test]
    fn numbers_print_compactly() {
        let cases = [
            (1e-300, "1e-300"),
            (1e-11, "1e-11"),
            (2.5e6, "2.5e6"),
            (3e6, "3e6"),
            (190.564, "190.564"),
            (101325.0, "101325"),
            (0.5, "0.5"),
            (-40.0, "-40"),
            (0.0, "0"),
            (1e-4, "1e-4"),
            (0.001, "0.001"),
            (f64::NAN, "NaN"),
            (f64::INFINITY, "inf"),
            (f64::NEG_INFINITY, "-inf"),
            (f64::MAX, "1.7976931348623157e308"),
            (f64::MIN_POSITIVE, "2.2250738585072014e-308"),
        ];
        for (x, s) in cases {
            assert_eq!(num(x).to_string(), s);
            // The short form reads back to the same value.
            if x.is_finite() {
                assert_eq!(s.parse::<f64>().unwrap(), x);
            }
        }
        let e = check::temperature(-1e-300).unwrap_err().to_string();
        assert_eq!(
            e,
            "invalid input: temperature: -1e-300 K; a finite value > 0 K is required"
        );
        let e = check::pressure(f64::INFINITY).unwrap_err().to_string();
        assert!(e.contains("inf Pa is not a finite number"), "{e}");
        let e = Error::OutsideValidity {
            what: "temperature".into(),
            value: 1.0,
            min: 19.0564,
            max: f64::INFINITY,
            detail: "d".into(),
        };
        assert_eq!(
            e.to_string(),
            "outside validity range: temperature = 1 is outside [19.0564, inf] (d)"
        );
        assert_eq!(nums(&[1e-12, 2.0]), "[1e-12, 2]");
    }

    #[test]
    fn counts_name_their_range() {
        assert!(check::count("threads", 4, 0, 256).is_ok());
        let e = check::count("threads", 1_000_000, 0, 256).unwrap_err().to_string();
        assert_eq!(
            e,
            "invalid input: threads: 1000000; an integer from 0 to 256 is required"
        );
    }
}
