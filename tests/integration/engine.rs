//! engine suite
use crate::support::*;
