//! Physical coefficients from per-unit-inertia ones: gravity, parallel axis, GUM propagation.
