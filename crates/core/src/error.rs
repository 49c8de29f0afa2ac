//! The error type of core: every failure a user can provoke, with the context needed to fix it.
//!
//! Core never panics on user input; anything that can go wrong with data or settings comes back
//! as an [`Error`] whose message names the row, column or parameter involved.

use thiserror::Error as ThisError;

/// Result alias used throughout core.
pub type Result<T> = std::result::Result<T, Error>;

/// A failure of a core computation, readable by a person as is.
#[derive(Debug, Clone, PartialEq, ThisError)]
pub enum Error {
    /// The input text could not be read as a table.
    #[error("line {line}: {message}")]
    Parse {
        /// 1-based line number in the input text.
        line: usize,
        /// What went wrong.
        message: String,
    },
    /// A value in a named column of a row is unusable.
    #[error("row {row}, column '{column}': {message}")]
    Cell {
        /// 1-based data row number (as a person counts rows in the file).
        row: usize,
        /// Column name as written in the header, or its role if there was no header.
        column: String,
        /// What went wrong.
        message: String,
    },
    /// A whole column cannot be used as it stands (unknown unit, missing air/vacuum, …).
    #[error("column {index} ('{name}'): {message}")]
    Column {
        /// 1-based column number.
        index: usize,
        /// Column name as written in the header (or its role when there is no header).
        name: String,
        /// What went wrong and how to fix it.
        message: String,
    },
    /// The input as a whole cannot be used (empty, no recognisable columns, …).
    #[error("{message}")]
    Input {
        /// What went wrong and how to fix it.
        message: String,
    },
    /// A saved document (session) cannot be read.
    #[error("{message}")]
    Document {
        /// What went wrong.
        message: String,
    },
    /// Too few usable data points for the requested analysis.
    #[error("too few usable data points for {what}: {have} usable, at least {need} needed")]
    TooFewPoints {
        /// The analysis that was asked for.
        what: String,
        /// Usable points available.
        have: usize,
        /// Points required.
        need: usize,
    },
    /// A setting or parameter is out of its valid range.
    #[error("parameter '{name}': {message}")]
    Parameter {
        /// Parameter name, as shown to the user.
        name: String,
        /// What is wrong with it.
        message: String,
    },
    /// A numerical procedure could not produce a result.
    #[error("{what}: {message}")]
    Numerical {
        /// The computation that failed.
        what: String,
        /// Why.
        message: String,
    },
}

impl Error {
    /// Shorthand for [`Error::Parameter`].
    pub fn parameter(name: impl Into<String>, message: impl Into<String>) -> Self {
        Error::Parameter {
            name: name.into(),
            message: message.into(),
        }
    }

    /// Shorthand for [`Error::Numerical`].
    pub fn numerical(what: impl Into<String>, message: impl Into<String>) -> Self {
        Error::Numerical {
            what: what.into(),
            message: message.into(),
        }
    }
}
