//! fem stage (to be written).
