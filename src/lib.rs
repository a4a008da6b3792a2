//! `overtone`: harmonic resonance and power-quality screening of shunt capacitor banks in
//! industrial plants.
//!
//! Layers, each depending only on those before it: [`model`] (the plant as described) →
//! [`network`] (per-unit harmonic network) → [`solve`] (sparse factorization and the
//! step-combination engine) → [`study`] (scan, resonance, ...) → [`report`] (terminal, CSV,
//! JSON). [`check`] runs the studies of a plant end to end; [`demo`] holds the built-in
//! invented plant.

pub mod check;
pub mod demo;
pub mod io;
pub mod model;
pub mod network;
pub mod report;
pub mod solve;
pub mod standards;
pub mod study;
pub mod synthetic;
