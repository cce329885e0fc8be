//! Command line + `rhoscope.toml` → one validated `Settings`, the only
//! configuration that domain code sees.
