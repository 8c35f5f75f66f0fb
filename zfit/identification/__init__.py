"""identify."""
