//! Errors a person can act on: where (file, line, column), which key, what value, and
//! what is allowed. Every error maps to the exit code of docs/commands.md section 2.

use chrono::NaiveDate;
use std::fmt;

/// A place in an input file.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Location {
    /// The file as the user named it.
    pub file: String,
    /// 1-based line, where known.
    pub line: Option<usize>,
    /// 1-based column, where known.
    pub column: Option<usize>,
}

impl Location {
    /// The location of byte `offset` in `source`.
    pub fn at(file: &str, source: &str, offset: usize) -> Location {
        let offset = offset.min(source.len());
        let before = &source[..offset];
        let line = before.matches('\n').count() + 1;
        let line_start = before.rfind('\n').map_or(0, |i| i + 1);
        let column = before[line_start..].chars().count() + 1;
        Location {
            file: file.to_string(),
            line: Some(line),
            column: Some(column),
        }
    }

    /// A whole file, no position.
    pub fn file(file: &str) -> Location {
        Location {
            file: file.to_string(),
            line: None,
            column: None,
        }
    }
}

impl fmt::Display for Location {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match (self.line, self.column) {
            (Some(l), Some(c)) => write!(f, "{}:{l}:{c}", self.file),
            (Some(l), None) => write!(f, "{}:{l}", self.file),
            _ => write!(f, "{}", self.file),
        }
    }
}

/// Bad input in a file.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct InputError {
    /// Where.
    pub location: Location,
    /// The key (dotted path) or column, where one applies.
    pub key: Option<String>,
    /// What is wrong and what is allowed.
    pub message: String,
}

impl fmt::Display for InputError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match &self.key {
            Some(k) => write!(f, "{}: {k}: {}", self.location, self.message),
            None => write!(f, "{}: {}", self.location, self.message),
        }
    }
}

/// The simulation left the model's valid range (docs/model.md section 6).
#[derive(Debug, Clone, PartialEq)]
pub struct RangeError {
    /// The plan file.
    pub file: String,
    /// The scenario being simulated.
    pub scenario: String,
    /// Day since the start (0 = start date).
    pub day: u32,
    /// Calendar date of that day.
    pub date: NaiveDate,
    /// What left the range.
    pub what: String,
    /// Fat mass then, kg.
    pub fat_kg: f64,
    /// Fat-free mass then, kg.
    pub lean_kg: f64,
}

impl fmt::Display for RangeError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(
            f,
            "{}: the plan drives the model out of its valid range in scenario \"{}\" on day {} ({}): {} (state: mass {:.2} kg, fat mass {:.2} kg, fat-free mass {:.2} kg); lower the dose or the compensation, or shorten the horizon",
            self.file,
            self.scenario,
            self.day,
            self.date,
            self.what,
            self.fat_kg + self.lean_kg,
            self.fat_kg,
            self.lean_kg
        )
    }
}

/// Every failure of a command.
#[derive(Debug, thiserror::Error)]
pub enum Error {
    /// Bad input in a file (exit 2).
    #[error("{0}")]
    Input(InputError),
    /// The model's valid range was left (exit 2).
    #[error("{0}")]
    OutOfRange(RangeError),
    /// A bad command-line request (exit 2).
    #[error("{0}")]
    Usage(String),
    /// An input file that cannot be read (exit 2).
    #[error("{path}: cannot read: {reason}")]
    Unreadable {
        /// The path.
        path: String,
        /// Why.
        reason: String,
    },
    /// A state the program should never reach (exit 1: a bug).
    #[error("internal error (a bug, please report it): {0}")]
    Internal(String),
    /// An output that could not be written (exit 1).
    #[error("{path}: cannot write: {reason}")]
    Output {
        /// The path.
        path: String,
        /// Why.
        reason: String,
    },
}

impl Error {
    /// The process exit code for this error (docs/commands.md section 2: 2 bad input, 1 anything else).
    pub fn exit_code(&self) -> i32 {
        match self {
            Error::Output { .. } | Error::Internal(_) => 1,
            _ => 2,
        }
    }

    /// A bad-input error at byte `offset` of `source`.
    pub fn at(
        file: &str,
        source: &str,
        offset: usize,
        key: &str,
        message: impl Into<String>,
    ) -> Error {
        Error::Input(InputError {
            location: Location::at(file, source, offset),
            key: (!key.is_empty()).then(|| key.to_string()),
            message: message.into(),
        })
    }
}
