"""photorx.views stage."""
