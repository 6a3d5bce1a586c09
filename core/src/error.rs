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
    #[error("outside validity range: {what} = {value} is outside [{min}, {max}] ({detail})")]
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
    #[error("{method} did not converge: residual {} > tolerance {} after {}", .diagnostics.residual, .diagnostics.tolerance, iters(.diagnostics))]
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

/// Input checks shared by every public entry point.
pub(crate) mod check {
    use super::{Error, Result};

    /// A temperature: finite and > 0 K.
    pub fn temperature(t: f64) -> Result<()> {
        if t.is_finite() && t > 0.0 {
            Ok(())
        } else {
            Err(Error::invalid(
                "temperature",
                format!("{t} K; a finite value > 0 K is required"),
            ))
        }
    }

    /// A pressure: finite and > 0 Pa.
    pub fn pressure(p: f64) -> Result<()> {
        if p.is_finite() && p > 0.0 {
            Ok(())
        } else {
            Err(Error::invalid(
                "pressure",
                format!("{p} Pa; a finite value > 0 Pa is required"),
            ))
        }
    }

    /// A molar volume or volume: finite and > 0 m3.
    pub fn volume(v: f64) -> Result<()> {
        if v.is_finite() && v > 0.0 {
            Ok(())
        } else {
            Err(Error::invalid(
                "volume",
                format!("{v} m3; a finite value > 0 is required"),
            ))
        }
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
            if !x.is_finite() || x < 0.0 {
                return Err(Error::invalid(
                    "amounts",
                    format!("amount of component {i} is {x} mol; finite values >= 0 are required"),
                ));
            }
            sum += x;
        }
        if !(sum > 0.0) || !sum.is_finite() {
            return Err(Error::invalid(
                "amounts",
                format!("total amount is {sum} mol; at least one amount must be > 0"),
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
    }
}
