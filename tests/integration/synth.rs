//! Tests of `synth` (issue 6/7); filled with the module.
