//! One integration-test binary (faster to link on CI than many).

#[path = "../support/refset.rs"]
mod refset;
#[path = "../support/bin.rs"]
mod support_bin;

mod cli;
mod fixture_rdkit;
mod proptests;

mod aromaticity;
mod calibrate;
mod campaign;
mod colour;
mod combine;
mod fast_tier;
mod fingerprints;
mod forster;
mod geometry;
mod handbook;
mod invalid_smiles;
mod photophysics;
mod pi_corrections;
mod pi_engine;
mod pi_physics;
mod pi_torsion;
mod pi_typing;
mod qc_ingest;
mod qc_readers;
mod rank;
mod report_html;
mod stereo;
mod synth;
