//! Readers for the excited-state sections and final geometry of quantum-chemistry output files,
//! the neutral results table, and matching results to candidates (issue 6).

pub mod matching;
