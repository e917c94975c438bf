//! One integration-test binary (faster to link on CI than many).

mod fixture_rdkit;
