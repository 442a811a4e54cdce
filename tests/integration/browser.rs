//! browser suite
use crate::support::*;
