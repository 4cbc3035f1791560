//! solve stage (to be written).
