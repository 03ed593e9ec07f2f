//! Borrowed columns of numbers inside a validated image.

use super::bytes;
use crate::interp::Nodes;

/// A column of f32 values borrowed from an image (little-endian words).
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct ColumnF32<'a> {
    bytes: &'a [u8],
}

/// A column of Q-format i32 values borrowed from an image.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct ColumnQ<'a> {
    bytes: &'a [u8],
}

impl<'a> ColumnF32<'a> {
    pub(crate) const fn new(bytes: &'a [u8]) -> Self {
        Self { bytes }
    }
}

impl<'a> ColumnQ<'a> {
    pub(crate) const fn new(bytes: &'a [u8]) -> Self {
        Self { bytes }
    }
}

impl Nodes for ColumnF32<'_> {
    type Value = f32;
    #[inline]
    fn len(&self) -> usize {
        self.bytes.len() / 4
    }
    #[inline]
    fn node(&self, i: usize) -> f32 {
        bytes::f32_at(self.bytes, i.saturating_mul(4))
    }
}

impl Nodes for ColumnQ<'_> {
    type Value = i32;
    #[inline]
    fn len(&self) -> usize {
        self.bytes.len() / 4
    }
    #[inline]
    fn node(&self, i: usize) -> i32 {
        bytes::i32_at(self.bytes, i.saturating_mul(4))
    }
}
