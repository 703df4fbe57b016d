//! Transfer matrices on strips.
