//! UCUM units and conversions.
