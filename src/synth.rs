//! Synthetic boards (placeholder).
