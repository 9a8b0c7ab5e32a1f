//! Writing output files whole or not at all: write to a temporary file beside the target, then rename.
