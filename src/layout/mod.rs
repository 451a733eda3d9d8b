//! Page analysis: regions and text lines in right-to-left reading order.

pub mod components;
pub mod geometry;
