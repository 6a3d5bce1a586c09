//! Rust-side tests of the boundary.
