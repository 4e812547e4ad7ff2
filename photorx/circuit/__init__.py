"""photorx.circuit stage."""
