//! swingfit: identify the moment of inertia and the viscous, Coulomb and quadratic damping of a
//! rigid test article swinging on a pivot, from its free-decay angle logs.
//!
//! # Brief overview
//! The pipeline runs in stages, one module each:
//! - [`data`] reads a CSV log into a validated [`data::AngleLog`] (SI units, strictly increasing
//!   time) and surveys it (rate, gaps, equilibrium, period, noise).
//! - [`model`] holds the equation of motion and the damping terms ([`model::Term`]).
//! - [`integrate`] integrates the model at the log's sample times, with true stick–slip, into a
//!   [`integrate::Trajectory`].
//! - [`fit`] minimises the trajectory residuals and returns coefficients with intervals.
//! - [`report`] turns results into tables, JSON, plots and the coefficient sheet.
//! - [`cli`] is the thin command line over all of it.

pub mod article;
pub mod batch;
pub mod cli;
pub mod data;
pub mod fit;
pub mod integrate;
pub mod model;
pub mod physical;
pub mod report;
pub mod stats;
pub mod units;
