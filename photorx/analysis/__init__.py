"""photorx.analysis stage."""
