//! Page analysis: regions and text lines in right-to-left reading order.

pub mod geometry;
