//! io stage (to be written).
