//! Shared helpers for the validation tests.
