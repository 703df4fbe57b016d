//! Closed-form exact results.
