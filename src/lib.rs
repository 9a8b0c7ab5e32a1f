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
//! - [`physical`] turns per-unit-inertia results into J, c, τc, cq with GUM uncertainties.
//! - [`article`] reads the article file; [`batch`] fits many logs; [`stats`] holds the
//!   distributions, whiteness test and information criteria.
//! - [`cli`] is the thin command line over all of it.
//!
//! The five principal types: [`data::AngleLog`], [`model::Physics`], [`integrate::Trajectory`],
//! [`fit::FitOutcome`] and [`fit::compare::Comparison`].
//!
//! # Example
//! A log made here (a swing with viscous and Coulomb damping, written as CSV in degrees with
//! 0.01° of noise), read back and fitted:
//! ```
//! use swingfit::data::{self, write};
//! use swingfit::fit::{self, FitOptions};
//! use swingfit::integrate::{self, Method};
//! use swingfit::model::{DampingSet, Physics, Release, Term};
//!
//! let truth = Physics::undamped(4.0).with_coef(Term::Viscous, 0.05).with_coef(Term::Coulomb, 0.02);
//! let release = Release { equilibrium: 0.0, angle: 0.5, velocity: 0.0 };
//! let times: Vec<f64> = (0..3000).map(|i| i as f64 * 0.01).collect();
//! let clean = integrate::simulate(&truth, &release, &times, Method::DormandPrince { rtol: 1e-10, atol: 1e-12 })?;
//! let format = write::LogFormat {
//!     unit: write::OutputUnit::Deg,
//!     noise_sd_rad: 0.01f64.to_radians(),
//!     seed: 1,
//!     ..Default::default()
//! };
//! let csv = write::render(&times, &clean.angle, &format)?;
//! let log = data::parse("example.csv", &csv, &Default::default())?;
//!
//! let damping = DampingSet::from_terms(&[Term::Viscous, Term::Coulomb]);
//! let result = fit::fit(&[log], &FitOptions { damping, ..Default::default() })?;
//! let b1 = result.term(Term::Viscous).expect("fitted");
//! assert!(b1.ci95.0 < 0.05 && 0.05 < b1.ci95.1);
//! # Ok::<(), Box<dyn std::error::Error>>(())
//! ```

pub mod article;
pub mod batch;
pub mod cli;
pub mod data;
pub mod fit;
pub mod integrate;
pub mod model;
pub mod physical;
pub mod plan;
pub mod report;
pub mod safety;
pub mod stats;
pub mod units;
