"""Read selectors."""
