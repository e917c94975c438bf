//! Tests of `calibrate` (issue 6/7); filled with the module.
