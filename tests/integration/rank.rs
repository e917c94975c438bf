//! Tests of `rank` (issue 6/7); filled with the module.
