//! Covariance, standard errors, confidence intervals, flags for unidentifiable terms.
