//! geometry stage (to be written).
