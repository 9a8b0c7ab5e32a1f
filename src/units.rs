//! Units of time and angle in logs, and their conversion to SI.
