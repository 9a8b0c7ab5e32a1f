//! Statistics shared by the estimator and the comparison: distributions, whiteness, information criteria.
