//! Interpolation on uniform grids: locating a point on an axis, and linear,
//! monotone cubic and bilinear kernels, in f32 and in Q-format integers.
//!
//! The kernels read nodes through the small [`Nodes`] trait, so the same code
//! serves const-generic arrays in flash ([`crate::table`]) and borrowed views
//! over a parsed image ([`crate::image`]).

mod axis;
mod kernel_f32;
mod kernel_fixed;

pub(crate) use axis::InsideQ;
pub use axis::{Axis, AxisQ, Position, PositionQ};
pub use kernel_f32::{bilinear, cubic_monotone, linear};
pub use kernel_fixed::{bilinear_q, cubic_monotone_q, linear_q};
pub(crate) use kernel_fixed::{lerp_q, lerp_q_diff};

/// Interpolation method between table nodes.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[non_exhaustive]
pub enum Interpolation {
    /// Piecewise linear: continuous, exact at nodes, never overshoots.
    Linear,
    /// Piecewise cubic Hermite with Fritsch–Carlson monotone tangents
    /// (harmonic-mean form of Fritsch & Butland 1984): continuous with a
    /// continuous first derivative, exact at nodes, monotone data stays
    /// monotone.
    MonotoneCubic,
}

impl Interpolation {
    /// The code stored in a table image.
    #[must_use]
    pub const fn code(self) -> u8 {
        match self {
            Self::Linear => 0,
            Self::MonotoneCubic => 1,
        }
    }

    /// `true` when the compensators run the linear kernel for this method:
    /// it is linear, or the crate is built without the `cubic` feature
    /// (then the parser has rejected every cubic image, and the constant
    /// `true` lets the optimiser drop the cubic kernel).
    #[inline(always)]
    pub(crate) fn runs_linear(self) -> bool {
        !cfg!(feature = "cubic") || matches!(self, Self::Linear)
    }

    /// The method for an image code, `None` for an unknown code.
    #[must_use]
    pub const fn from_code(code: u8) -> Option<Self> {
        match code {
            0 => Some(Self::Linear),
            1 => Some(Self::MonotoneCubic),
            _ => None,
        }
    }
}

/// Read access to the node values of one table column.
///
/// Implementations return a neutral value (zero) for an index past the end
/// instead of panicking; the kernels never ask for one when `len() >= 2`.
pub trait Nodes {
    /// Node value type (`f32`, or `i32` in Q format).
    type Value: Copy;
    /// Number of nodes.
    fn len(&self) -> usize;
    /// `true` when there are no nodes.
    fn is_empty(&self) -> bool {
        self.len() == 0
    }
    /// Value of node `i`.
    fn node(&self, i: usize) -> Self::Value;
    /// Values of nodes `i` and `i + 1` (one bounds check where the storage
    /// allows it).
    #[inline]
    fn pair(&self, i: usize) -> (Self::Value, Self::Value) {
        (self.node(i), self.node(i.wrapping_add(1)))
    }
}

impl<const N: usize> Nodes for [f32; N] {
    type Value = f32;
    #[inline]
    fn len(&self) -> usize {
        N
    }
    #[inline]
    fn node(&self, i: usize) -> f32 {
        self.get(i).copied().unwrap_or(0.0)
    }
}

impl<const N: usize> Nodes for [i32; N] {
    type Value = i32;
    #[inline]
    fn len(&self) -> usize {
        N
    }
    #[inline]
    fn node(&self, i: usize) -> i32 {
        self.get(i).copied().unwrap_or(0)
    }
}

impl Nodes for &[f32] {
    type Value = f32;
    #[inline]
    fn len(&self) -> usize {
        <[f32]>::len(self)
    }
    // Same as the array impl above, for slices.
    #[inline]
    fn node(&self, i: usize) -> f32 {
        self.get(i).copied().unwrap_or(0.0)
    }
}

impl Nodes for &[i32] {
    type Value = i32;
    #[inline]
    fn len(&self) -> usize {
        <[i32]>::len(self)
    }
    #[inline]
    fn node(&self, i: usize) -> i32 {
        self.get(i).copied().unwrap_or(0)
    }
}
