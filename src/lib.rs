//! `overtone`: harmonic resonance and power-quality screening of shunt capacitor banks in
//! industrial plants.
//!
//! Layers, each depending only on those before it: [`model`] (the plant as described) →
//! [`network`] (per-unit harmonic network) → [`solve`] (sparse factorization and the
//! step-combination engine) → [`study`] (scan, resonance, ..., the physics) → [`jobs`] (what
//! a command runs: the studies composed into results) → [`present`] (terminal, review
//! workbook, CSV, JSON: bytes from results) → [`export`] (output paths checked before the
//! work, files written whole). [`io`] reads the input workbook into the [`model`];
//! [`standards`] holds the limit tables as data; [`demo`] holds the built-in invented plant.

pub mod demo;
pub mod export;
pub mod io;
pub mod jobs;
pub mod model;
pub mod network;
pub mod present;
pub mod solve;
pub mod standards;
pub mod study;
