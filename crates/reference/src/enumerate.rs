//! Exact enumeration of small tori.
