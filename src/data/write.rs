//! Writing logs in a format the loader reads (radians, degrees or encoder counts), with optional noise and quantisation.
