//! A value with its standard uncertainty: the one shape every σ-carrying number takes in the
//! documents, shared by the report and the modules that fill it.

use serde::{Deserialize, Serialize};

/// A value with its standard uncertainty (null when not estimable).
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct ValueSigma {
    /// Value.
    pub value: f64,
    /// One-standard-deviation uncertainty; null when not estimable.
    pub sigma: Option<f64>,
}

impl ValueSigma {
    /// Construct (a non-finite σ becomes null).
    pub fn new(value: f64, sigma: Option<f64>) -> Self {
        Self {
            value,
            sigma: sigma.filter(|s| s.is_finite()),
        }
    }
}
