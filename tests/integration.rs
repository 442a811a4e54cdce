//! integration tests (placeholder while the crate is set up)
