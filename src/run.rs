//! run stage (to be written).
