//! Tests of `qc_readers` (issue 6/7); filled with the module.
