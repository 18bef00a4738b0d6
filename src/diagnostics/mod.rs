//! Convergence diagnostics (placeholder until the module lands).
