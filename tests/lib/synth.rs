//! Synthetic logs for the estimator tests: the model integrated with tight Dormand–Prince,
//! written through the log writer (noise, encoder quantisation) and read back by the loader,
//! so the test logs take the same path as a real one.

use swingfit::data::write::{LogFormat, OutputUnit, render};
use swingfit::data::{AngleLog, LoadOptions, parse};
use swingfit::integrate::{Method, simulate};
use swingfit::model::{Physics, Release, Term};

/// A test case: physics, release, sampling and recording.
#[derive(Clone, Debug)]
pub struct Case {
    pub physics: Physics,
    pub release: Release,
    pub times: Vec<f64>,
    pub noise_rad: f64,
    pub counts_per_rev: Option<f64>,
    pub seed: u64,
}

/// Uniform sample times from 0.
pub fn uniform(duration: f64, rate: f64) -> Vec<f64> {
    let n = (duration * rate).round() as usize + 1;
    (0..n).map(|i| i as f64 / rate).collect()
}

/// Physics with the given coefficients (b1, b0, b2) and ωn.
pub fn physics(omega_n: f64, b1: f64, b0: f64, b2: f64) -> Physics {
    Physics::undamped(omega_n).with_coef(Term::Viscous, b1).with_coef(Term::Coulomb, b0).with_coef(Term::Quadratic, b2)
}

/// Released from rest at `angle` [rad] past the equilibrium `eq`.
pub fn release(eq: f64, angle: f64) -> Release {
    Release { equilibrium: eq, angle: eq + angle, velocity: 0.0 }
}

impl Case {
    /// The noise-free angles.
    pub fn clean(&self) -> Vec<f64> {
        simulate(&self.physics, &self.release, &self.times, Method::DormandPrince { rtol: 1e-12, atol: 1e-14 })
            .expect("valid test physics")
            .angle
    }

    /// The recorded log, read back by the loader.
    pub fn log(&self, name: &str) -> AngleLog {
        let angles = self.clean();
        let format = LogFormat {
            unit: if self.counts_per_rev.is_some() { OutputUnit::Counts } else { OutputUnit::Rad },
            counts_per_rev: self.counts_per_rev,
            noise_sd_rad: self.noise_rad,
            seed: self.seed,
            comments: vec![],
        };
        let bytes = render(&self.times, &angles, &format).expect("render");
        let opts = LoadOptions { counts_per_rev: self.counts_per_rev, ..LoadOptions::default() };
        parse(name, &bytes, &opts).expect("synthetic log loads")
    }
}
