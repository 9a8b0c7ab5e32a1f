//! Library tests: trajectories against the committed SciPy reference (tests/reference/).
