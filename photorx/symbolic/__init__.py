"""photorx.symbolic stage."""
