//! Dates and times as notes write them.
