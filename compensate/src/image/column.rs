//! Borrowed columns of numbers inside a validated image.

use crate::interp::Nodes;

/// A column of f32 values borrowed from an image (little-endian words).
///
/// Stored as 4-byte words so that a read is one bounds check (no
/// alignment is required of the image).
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct ColumnF32<'a> {
    words: &'a [[u8; 4]],
}

/// A column of Q-format i32 values borrowed from an image.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct ColumnQ<'a> {
    words: &'a [[u8; 4]],
}

impl<'a> ColumnF32<'a> {
    pub(crate) fn new(bytes: &'a [u8]) -> Self {
        Self {
            words: bytes.as_chunks::<4>().0,
        }
    }
}

impl<'a> ColumnQ<'a> {
    pub(crate) fn new(bytes: &'a [u8]) -> Self {
        Self {
            words: bytes.as_chunks::<4>().0,
        }
    }
}

impl Nodes for ColumnF32<'_> {
    type Value = f32;
    #[inline]
    fn len(&self) -> usize {
        self.words.len()
    }
    #[inline]
    fn node(&self, i: usize) -> f32 {
        self.words.get(i).map_or(0.0, |w| f32::from_le_bytes(*w))
    }
    #[inline]
    fn pair(&self, i: usize) -> (f32, f32) {
        match self.words.get(i..i.wrapping_add(2)) {
            Some(&[a, b]) => (f32::from_le_bytes(a), f32::from_le_bytes(b)),
            _ => (self.node(i), 0.0),
        }
    }
}

// Same as ColumnF32's impl, for i32 words.
impl Nodes for ColumnQ<'_> {
    type Value = i32;
    #[inline]
    fn len(&self) -> usize {
        self.words.len()
    }
    #[inline]
    fn node(&self, i: usize) -> i32 {
        self.words.get(i).map_or(0, |w| i32::from_le_bytes(*w))
    }
    #[inline]
    fn pair(&self, i: usize) -> (i32, i32) {
        match self.words.get(i..i.wrapping_add(2)) {
            Some(&[a, b]) => (i32::from_le_bytes(a), i32::from_le_bytes(b)),
            _ => (self.node(i), 0),
        }
    }
}
