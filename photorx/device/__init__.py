"""photorx.device stage."""
